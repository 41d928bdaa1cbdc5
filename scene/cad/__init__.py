"""CAD exports -> scenes: the bodies of STL/OBJ/PLY/3MF/STEP files (bodies.py, step.py), their
unit (units.py), primitives recognised in them (recognise.py), a parts list (partslist.py) and
the scene text written from them (importing.py, writing.py). One call per file or folder, so a
batch can import each of many on the fly."""
