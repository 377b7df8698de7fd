"""Engines for comparator networks: enumeration of 0-1 inputs (enumeration.py, reduction.py, product.py,
bitslice.py, compiled.py; enumeration_pieces.py splits it), the structural SAT engine (sat.py, split.py,
blocks.py, sat_blocks.py, cnf.py, order.py), redundant comparators (redundancy.py) and what a proof rests
on (certificates.py)."""
