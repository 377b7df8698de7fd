"""Benchmark: the DRUP checker (watched literals) against a plain RUP checker that rescans every clause.

Proofs are glucose 4's (python-sat, ``with_proof=True``) for the plain CNFs of
sorting networks.  Both checkers must accept; the table gives lemmas, seconds
and the ratio.  Run by hand: ``python tests/benchmarks/bench_drup.py``.
"""

from __future__ import annotations

import time

from pysat.solvers import Solver

from sortcheck.engines.networks.cnf import dimacs, plain_cnf
from sortcheck.model import Sorts
from sortcheck.model.families import build_family
from sortcheck.certify.drup import check_proof, parse_dimacs, parse_proof

CASES = [("merge-exchange", 24), ("bitonic", 32), ("pairwise", 32), ("merge-exchange", 40)]


def rescanning_check(cnf_text: str, proof_text: str) -> bool:
    """RUP by repeated passes over all clauses until nothing changes (deletions ignored, which is sound)."""
    _, clauses = parse_dimacs(cnf_text)
    held = [list(clause) for clause in clauses]
    for _, deletion, literals in parse_proof(proof_text):
        if deletion:
            continue
        assigned = {-literal for literal in literals}
        changed, conflict = True, False
        while changed and not conflict:
            changed = False
            for clause in held:
                open_literals = [lit for lit in clause if -lit not in assigned]
                if any(lit in assigned for lit in clause):
                    continue
                if not open_literals:
                    conflict = True
                    break
                if len(open_literals) == 1:
                    assigned.add(open_literals[0])
                    changed = True
        if not conflict:
            return False
        if not literals:
            return True
        held.append(list(literals))
    return False


def main() -> None:
    print(f"{'network':<22} {'lemmas':>7} {'watched s':>10} {'rescan s':>10} {'ratio':>7}")
    for family, n in CASES:
        encoding = plain_cnf(build_family(family, n), Sorts())
        text = dimacs(encoding.clauses, encoding.pool)
        with Solver(name="glucose4", bootstrap_with=encoding.clauses, with_proof=True) as solver:
            assert solver.solve() is False
            proof = "\n".join(solver.get_proof()) + "\n"
        started = time.perf_counter()
        outcome = check_proof(text, proof)
        watched = time.perf_counter() - started
        started = time.perf_counter()
        baseline = rescanning_check(text, proof)
        rescan = time.perf_counter() - started
        assert outcome.accepted and baseline
        print(f"{family + '-' + str(n):<22} {outcome.lemmas:>7} {watched:>10.3f} {rescan:>10.3f} "
              f"{rescan / watched:>6.1f}x")


if __name__ == "__main__":
    main()
