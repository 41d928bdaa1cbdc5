"""Safety, handling and shipping figures of an assembly: the implant shell, the air-transport
field and class, the forces between the parts, demagnetisation and the flux index. The magnets
are taken alone, off any steel plate (the assembly as a person handles it or a courier carries it).
"""
