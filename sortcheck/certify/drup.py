"""An independent checker of DRUP proofs: every lemma must follow by reverse unit propagation.

A DRUP proof of a CNF's unsatisfiability is a list of lines, each a *lemma*
(a clause, ``1 -2 0``) or a *deletion* (``d 1 -2 0``).  A lemma is accepted
when assigning the negation of its literals and propagating units over the
clauses held so far (the CNF, accepted lemmas, minus deletions) ends in a
conflict (RUP); it is then held like any clause.  The proof is accepted when
the clauses held become contradictory by unit propagation alone (the empty
clause is a lemma like any other).  Every accepted lemma is implied by the
CNF, so acceptance proves the CNF unsatisfiable.

This module imports nothing from the rest of sortcheck: it reads DIMACS and
proof text and trusts no encoder or solver.  Propagation uses two watched
literals per clause, against a trail of assignments that unit propagation
forces at the top level (kept between lemmas).  A deletion of a clause that
is the reason of a top-level assignment is not carried out (solvers delete
such clauses once the assignment is fixed, and a checker that honoured it
would have to forget the assignment); keeping a clause can only make more
lemmas follow from clauses that are all implied by the CNF, so this stays
sound.  Deletions of clauses that are not held are ignored and counted.

>>> result = check_proof("p cnf 2 4\\n1 2 0\\n-1 2 0\\n1 -2 0\\n-1 -2 0\\n", "2 0\\n0\\n")
>>> result.accepted, result.lemmas  # after the lemma "2", unit propagation alone is contradictory
(True, 1)
>>> check_proof("p cnf 2 3\\n1 2 0\\n-1 2 0\\n1 -2 0\\n", "2 0\\n0\\n").accepted
False
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Iterable, Iterator


class ProofFormatError(ValueError):
    """The CNF or the proof text is not well formed (the message names the line)."""


@dataclass(frozen=True)
class ProofCheck:
    """The outcome of checking one proof.

    ``failed_line`` is the 1-based line of the proof whose lemma did not
    follow (None when every lemma did); ``reason`` says in words why the
    proof was accepted or rejected.
    """

    accepted: bool
    reason: str
    lemmas: int
    deletions: int
    kept_deletions: int
    missing_deletions: int
    failed_line: int | None
    seconds: float

    def to_json(self) -> dict:
        return {"accepted": self.accepted, "reason": self.reason, "lemmas": self.lemmas,
                "deletions": self.deletions, "kept_deletions": self.kept_deletions,
                "missing_deletions": self.missing_deletions, "failed_line": self.failed_line,
                "seconds": round(self.seconds, 4)}


def parse_dimacs(text: str) -> tuple[int, list[list[int]]]:
    """The variable count and clauses of DIMACS CNF text (comment lines skipped).

    >>> parse_dimacs("c a comment\\np cnf 3 2\\n1 -3 0\\n2\\n3 0\\n")
    (3, [[1, -3], [2, 3]])
    """
    header: tuple[int, int] | None = None
    clauses: list[list[int]] = []
    current: list[int] = []
    for number, line in enumerate(text.splitlines(), 1):
        stripped = line.strip()
        if not stripped or stripped.startswith("c") or stripped.startswith("%"):
            continue
        if stripped.startswith("p"):
            parts = stripped.split()
            if header is not None or len(parts) != 4 or parts[1] != "cnf":
                raise ProofFormatError(f"CNF line {number}: bad header {stripped!r}")
            header = (_number(parts[2], number, "CNF"), _number(parts[3], number, "CNF"))
            continue
        if header is None:
            raise ProofFormatError(f"CNF line {number}: clause before the 'p cnf' header")
        for token in stripped.split():
            literal = _literal(token, number, "CNF")
            if literal == 0:
                clauses.append(current)
                current = []
            else:
                current.append(literal)
    if header is None:
        raise ProofFormatError("CNF: no 'p cnf' header")
    if current:
        raise ProofFormatError("CNF: the last clause has no terminating 0")
    variables, count = header
    if count != len(clauses):
        raise ProofFormatError(f"CNF: the header announces {count} clauses, the text has {len(clauses)}")
    if any(abs(literal) > variables for clause in clauses for literal in clause):
        raise ProofFormatError(f"CNF: a literal exceeds the {variables} variables of the header")
    return variables, clauses


def parse_proof(text: str) -> Iterator[tuple[int, bool, list[int]]]:
    """``(line, is_deletion, literals)`` for each step of a text DRUP proof.

    >>> list(parse_proof("1 2 0\\nd 1 2 0\\n0\\n"))
    [(1, False, [1, 2]), (2, True, [1, 2]), (3, False, [])]
    """
    for number, line in enumerate(text.splitlines(), 1):
        tokens = line.split()
        if not tokens or tokens[0].startswith("c"):
            continue
        deletion = tokens[0] == "d"
        if deletion:
            tokens = tokens[1:]
        literals = [_literal(token, number, "proof") for token in tokens]
        if not literals or literals[-1] != 0 or 0 in literals[:-1]:
            raise ProofFormatError(f"proof line {number}: a step must be literals ending in one 0")
        yield number, deletion, literals[:-1]


def _number(token: str, line: int, what: str) -> int:
    if not token.isdigit():
        raise ProofFormatError(f"{what} line {line}: expected a count, got {token!r}")
    return int(token)


def _literal(token: str, line: int, what: str) -> int:
    body = token[1:] if token.startswith("-") else token
    if not body.isdigit():
        raise ProofFormatError(f"{what} line {line}: expected a literal, got {token!r}")
    return int(token)


def _code(literal: int) -> int:
    """Literal ``v`` as ``2v``, ``-v`` as ``2v + 1``: negation is ``code ^ 1`` and codes index lists."""
    return 2 * literal if literal > 0 else 1 - 2 * literal


class _Database:
    """Clauses with two watched literals, and the top-level trail unit propagation forces.

    Literals are codes (:func:`_code`); ``truth[code]`` is 1 when the literal
    is true, -1 when false, 0 when unassigned.
    """

    def __init__(self, variables: int):
        self.truth = [0] * (2 * variables + 2)
        self.reason = [-1] * (2 * variables + 2)  # by the code of the true literal
        self.trail: list[int] = []
        self.head = 0
        self.clauses: list[list[int]] = []
        self.alive: list[bool] = []
        self.watches: list[list[int]] = [[] for _ in range(2 * variables + 2)]
        self.by_key: dict[tuple[int, ...], list[int]] = {}
        self.contradictory = False

    def _assign(self, code: int, reason: int) -> None:
        self.truth[code] = 1
        self.truth[code ^ 1] = -1
        self.reason[code] = reason
        self.trail.append(code)

    def add(self, literals: Iterable[int]) -> None:
        """Hold a clause (top-level propagation follows)."""
        clause = list(dict.fromkeys(_code(literal) for literal in literals))
        if any(code ^ 1 in clause for code in clause):
            return  # a tautology constrains nothing
        index = len(self.clauses)
        self.clauses.append(clause)
        self.alive.append(True)
        self.by_key.setdefault(tuple(sorted(clause)), []).append(index)
        if self.contradictory:
            return
        truth = self.truth
        clause.sort(key=lambda code: truth[code] == -1)  # literals that are not false first
        if not clause or truth[clause[0]] == -1:
            self.contradictory = True
            return
        if len(clause) >= 2:
            self.watches[clause[0]].append(index)
            self.watches[clause[1]].append(index)
        if (len(clause) == 1 or truth[clause[1]] == -1) and truth[clause[0]] != 1:
            self._assign(clause[0], index)
            if not self.propagate():
                self.contradictory = True

    def delete(self, literals: list[int]) -> str:
        """Stop holding one copy of a clause: ``"deleted"``, ``"kept"`` (a reason) or ``"missing"``."""
        copies = self.by_key.get(tuple(sorted({_code(literal) for literal in literals})))
        if not copies:
            return "missing"
        index = copies[-1]
        if any(self.reason[code] == index and self.truth[code] == 1 for code in self.clauses[index]):
            return "kept"
        copies.pop()
        self.alive[index] = False  # watch lists drop it lazily
        return "deleted"

    def propagate(self) -> bool:
        """Unit propagation from the unprocessed part of the trail; False on a conflict."""
        truth, clauses, alive, watches, trail = self.truth, self.clauses, self.alive, self.watches, self.trail
        reason = self.reason
        while self.head < len(trail):
            false_code = trail[self.head] ^ 1
            self.head += 1
            watching = watches[false_code]
            if not watching:
                continue
            kept: list[int] = []
            for position, index in enumerate(watching):
                if not alive[index]:
                    continue
                clause = clauses[index]
                if clause[0] == false_code:
                    clause[0], clause[1] = clause[1], false_code
                other = clause[0]
                other_truth = truth[other]
                if other_truth == 1:
                    kept.append(index)
                    continue
                for k in range(2, len(clause)):
                    candidate = clause[k]
                    if truth[candidate] != -1:
                        clause[1], clause[k] = candidate, false_code
                        watches[candidate].append(index)
                        break
                else:
                    kept.append(index)
                    if other_truth == -1:
                        kept.extend(watching[position + 1:])
                        watches[false_code] = kept
                        return False
                    truth[other] = 1
                    truth[other ^ 1] = -1
                    reason[other] = index
                    trail.append(other)
            watches[false_code] = kept
        return True

    def implied(self, lemma: list[int]) -> bool:
        """Whether ``lemma`` follows by reverse unit propagation (the state is restored after)."""
        codes = [_code(literal) for literal in lemma]
        truth = self.truth
        if self.contradictory or any(truth[code] == 1 or code ^ 1 in codes for code in codes):
            return True  # already satisfied at the top level, or a tautology
        mark = len(self.trail)
        for code in codes:
            if truth[code] == 0:
                self._assign(code ^ 1, -1)
        conflict = not self.propagate()
        for code in self.trail[mark:]:
            truth[code] = truth[code ^ 1] = 0
            self.reason[code] = -1
        del self.trail[mark:]
        self.head = mark
        return conflict


def check_proof(cnf_text: str, proof_text: str, seconds: float | None = None) -> ProofCheck:
    """Check a text DRUP proof of the CNF's unsatisfiability (see the module text).

    With ``seconds``, a check that takes longer stops and rejects the proof,
    saying so (nothing is accepted unchecked).
    """
    started = time.perf_counter()
    deadline = None if seconds is None else started + seconds
    variables, clauses = parse_dimacs(cnf_text)
    steps = list(parse_proof(proof_text))
    largest = max((abs(literal) for _, _, literals in steps for literal in literals), default=0)
    database = _Database(max(variables, largest))
    for clause in clauses:
        database.add(clause)
    lemmas = deletions = kept = missing = 0

    def outcome(accepted: bool, reason: str, failed: int | None = None) -> ProofCheck:
        return ProofCheck(accepted, reason, lemmas, deletions, kept, missing, failed, time.perf_counter() - started)

    for line, deletion, literals in steps:
        if database.contradictory:
            break
        if deletion:
            deletions += 1
            done = database.delete(literals)
            kept += done == "kept"
            missing += done == "missing"
            continue
        lemmas += 1
        if deadline is not None and lemmas % 256 == 0 and time.perf_counter() > deadline:
            return outcome(False, f"the check ran out of its {seconds:g} seconds after {lemmas - 1} lemmas "
                                  f"(nothing is accepted unchecked)", line)
        if not database.implied(literals):
            return outcome(False, f"the lemma on proof line {line} does not follow by unit propagation", line)
        database.add(literals)
    if database.contradictory:
        return outcome(True, f"every lemma follows by unit propagation and the clauses held are contradictory "
                             f"({lemmas} lemmas checked)")
    return outcome(False, "the proof ends before the clauses held are contradictory (no empty clause follows)")
