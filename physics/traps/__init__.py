"""The trap search, by stage around one frozen TrapProblem (problem.py): scan.py (the grid and
the point-model energy on it), candidates.py, refine.py (Newton), contact.py and
contact_equilibria.py, classify.py, families.py, finite_size.py, wells.py with escape.py (the
priority flood), notes.py and report.py (the dataclasses); search.find_traps runs them."""
