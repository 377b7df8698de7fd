"""SAT sweeping: and-inverter graphs with simulation signatures (aig.py), equalities of two literals proved
over the cone back to proved cut points (prover.py), and a circuit proved equal to a reference graph signal
by signal (sweep.py)."""
