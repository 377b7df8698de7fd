"""Certificates: write what a verdict rests on to a directory and check it independently.

For each checked file, ``certify_result`` writes a directory with a
``certificate.json`` manifest and, for every unsatisfiable SAT call the proof
rests on, the CNF (DIMACS, variables named in comments) and the solver's
DRUP proof.  It then checks everything again without the engine:

* each DRUP proof with :mod:`sortcheck.certify.drup`, and with ``drat-trim``
  as well when that program is on the ``PATH``;
* each enumerated set of 0-1 vectors by evaluating it again with
  :mod:`sortcheck.certify.reevaluate` (and its digest recomputed from its
  description); a second run into the same directory also compares the
  digests with the ones recorded before;
* that the parts' claims add up to the whole network (the sat engine's split);
* for a gate circuit, that each CNF is the encoding of its claim for the
  circuit read again from its file, and that the claims cover every
  threshold (:mod:`sortcheck.certify.gates`);
* order relations by deriving them again; a counterexample by running the
  netlist on it and judging the output with the reference semantics.

The result is ``{"certified": bool, "certificate": {...}}`` for the report.
``certified`` is true only when every part was checked and nothing failed; a
verdict of an engine that gives no certificate material (``smt``,
``simulate``, ``lift``, ``bdd``, unknown verdicts) is never certified, and the scope
says why (:data:`UNCERTIFIED`).  The CNF encoding of each claim is trusted
(``encodings/comparator-network-cnf.md``; for gate circuits
``encodings/gate-circuit-cnf.md`` and ``encodings/gate-threshold-conditions.md``),
as is the 0-1 principle or the threshold decomposition; the ``scope`` of the
certificate says so.
"""

from __future__ import annotations

import hashlib
import json
import shutil
import subprocess
from dataclasses import replace
from pathlib import Path
from typing import Any

from sortcheck.engines.base import CertificateMaterial, Status, Verdict
from sortcheck.engines.networks.certificates import canonical, claim_digest, network_digest
from sortcheck.engines.runners.processes import run_program
from sortcheck.load import read_netlist
from sortcheck.model import ComparatorNetwork, GateCircuit, Netlist
from sortcheck.model.semantics import violation
from sortcheck.certify.gates import TRUSTED as GATE_TRUSTED, gate_problems
from sortcheck.certify.drup import ProofFormatError, check_proof
from sortcheck.report.results import FileResult
from sortcheck.certify.reevaluate import composition_problems, recheck_claim, recheck_space, relations_sort

MANIFEST = "certificate.json"
CERTIFICATE_VERSION = 1

#: The most 0-1 vectors an enumeration is evaluated again on (blocks of 2^22 lanes, about 2^26 a second).
REEVALUATION_LIMIT = 1 << 30

#: Seconds ``drat-trim`` may take on one proof.
DRAT_TRIM_SECONDS = 120.0

#: Seconds our checker may take on one proof (about 200 to 1,000 lemmas a second on CNFs of a few
#: thousand clauses, measured under load; the 41,509 lemmas of the pairwise network of 128 channels take
#: minutes); a proof not checked in time leaves the verdict uncertified.
CHECK_SECONDS = 900.0

OUR_CHECKER = "sortcheck drup (certify/drup.py)"
GATE_ENCODING = "sortcheck re-encoding of the circuit and threshold coverage (certify/gates.py)"

#: Why proved verdicts of these engines are not certified (they record no certificate material).
UNCERTIFIED = {
    "lift": "lifted verdicts are not certified in this version: the block proofs and the network proof are not "
            "recorded",
    "simulate": "verdicts of simulation are not certified in this version: the inputs evaluated are not recorded",
    "smt": "smt verdicts are not certified in this version: the SMT solver's proof is not recorded",
    "bdd": "bdd verdicts are not certified in this version: a BDD computation leaves no proof to check again",
}
OUR_EVALUATOR = "sortcheck re-evaluation (certify/reevaluate.py)"


def directory_for(root: Path, path: str) -> Path:
    """The certificate directory of one netlist file: its name and a hash of its full path.

    >>> directory_for(Path("certs"), "corpus/bitonic-16.json").name[:16]
    'bitonic-16.json-'
    """
    return root / f"{Path(path).name}-{hashlib.sha256(path.encode('utf-8')).hexdigest()[:10]}"


def _sha256_file(path: str) -> str | None:
    try:
        return hashlib.sha256(Path(path).read_bytes()).hexdigest()
    except OSError:
        return None


def run_drat_trim(cnf: Path, proof: Path, program: str | None = None) -> dict[str, Any] | None:
    """Check one proof with ``drat-trim`` (None when it is not on the PATH): ``{"accepted": bool, "output": ...}``."""
    program = program or shutil.which("drat-trim")
    if program is None:
        return None
    try:
        done = run_program([program, str(cnf), str(proof)], DRAT_TRIM_SECONDS)
    except (OSError, subprocess.TimeoutExpired) as error:
        return {"accepted": False, "output": f"drat-trim did not finish: {error}"}
    lines = [line for line in done.stdout.splitlines() if line.startswith("s ")]
    verdict = lines[-1] if lines else ""
    return {"accepted": verdict.strip() == "s VERIFIED", "output": verdict or done.stdout.strip()[-200:]}


class _Checks:
    """What was checked, what failed, and the files written, for one verdict."""

    def __init__(self) -> None:
        self.failures: list[str] = []
        self.checked_by: list[str] = []
        self.files: list[str] = []
        self.vectors = 0  # 0-1 vectors evaluated again
        self.lemmas = 0  # DRUP lemmas checked
        self.coverage = ""  # for a gate circuit: what the questions were found to cover

    def by(self, checker: str) -> None:
        if checker not in self.checked_by:
            self.checked_by.append(checker)


def _check_calls(material: CertificateMaterial, folder: Path, checks: _Checks) -> list[dict]:
    records = []
    for number, call in enumerate(material.calls, 1):
        cnf, proof = folder / f"call-{number:04d}.cnf", folder / f"call-{number:04d}.drup"
        cnf.write_text(call.dimacs, encoding="utf-8")
        proof.write_text(call.proof, encoding="utf-8")
        checks.files += [cnf.name, proof.name]
        record: dict[str, Any] = {"label": call.label, "cnf": cnf.name, "proof": proof.name, "solver": call.solver,
                                  "claim": call.claim}
        try:
            outcome = check_proof(call.dimacs, call.proof, CHECK_SECONDS)
            record["drup"] = outcome.to_json()
            accepted = outcome.accepted
            checks.lemmas += outcome.lemmas
        except ProofFormatError as error:
            record["drup"] = {"accepted": False, "reason": str(error)}
            accepted = False
        checks.by(OUR_CHECKER)
        if not accepted:
            checks.failures.append(f"{cnf.name}: {record['drup']['reason']}")
        external = run_drat_trim(cnf, proof)
        if external is not None:
            record["drat_trim"] = external
            checks.by("drat-trim")
            if not external["accepted"]:
                checks.failures.append(f"{cnf.name}: drat-trim did not verify the proof ({external['output']})")
        records.append(record)
    return records


def _check_enumerated(material: CertificateMaterial, network: ComparatorNetwork, prop, previous: dict,
                      checks: _Checks) -> list[dict]:
    records = []
    digest_of_network = network_digest(network)
    for part in material.enumerated:
        record: dict[str, Any] = {"label": part.label, "vectors": part.vectors, "digest": part.digest,
                                  "claim": part.claim}
        if "groups" in part.claim:  # a part of the sat engine: evaluate exactly the vectors it names
            holds, lanes = recheck_claim(network.comparators, network.channels, part.claim, REEVALUATION_LIMIT)
            if claim_digest(digest_of_network, part.claim, part.vectors) != part.digest or lanes != part.vectors:
                checks.failures.append(f"{part.label}: the digest or the count does not match the claim")
        else:  # a whole enumeration: evaluate every 0-1 input the property speaks about
            holds, lanes = recheck_space(network.comparators, network.channels, prop, REEVALUATION_LIMIT)
        record["reevaluated"] = {"vectors": lanes, "holds": holds}
        if holds is None:
            checks.failures.append(f"{part.label}: {lanes:,} vectors are beyond the re-evaluation limit of "
                                   f"{REEVALUATION_LIMIT:,}; the record lets a later run compare its digest")
        elif not holds:
            checks.failures.append(f"{part.label}: the re-evaluation found a failing vector")
        else:
            checks.by(OUR_EVALUATOR)
            checks.vectors += lanes
        before = previous.get(canonical(part.claim).decode())
        if before is not None:
            record["previous_run"] = "same digest" if before == part.digest else "different digest"
            if before != part.digest:
                checks.failures.append(f"{part.label}: the digest differs from the previous run's")
            else:
                checks.by("previous run's digest")
        records.append(record)
    return records


def _check_structure(material: CertificateMaterial, network: ComparatorNetwork, checks: _Checks) -> None:
    claims = [call.claim for call in material.calls] + [part.claim for part in material.enumerated]
    if not claims or any("groups" not in claim for claim in claims):
        return
    problems = composition_problems(network.size, network.comparators, network.channels, claims)
    checks.failures += [f"composition: {problem}" for problem in problems]
    if not problems:
        checks.by("sortcheck composition of parts (certify/reevaluate.py)")


def _recheck_counterexample(netlist: Netlist, verdict: Verdict, checks: _Checks) -> None:
    example = verdict.counterexample
    if isinstance(netlist, ComparatorNetwork):
        values = list(example.input)
        for a, b in netlist.comparators:
            if values[a] > values[b]:
                values[a], values[b] = values[b], values[a]
        width = None
    else:
        values = netlist.evaluate(list(example.input))
        width = getattr(netlist, "width", None)
    if tuple(values) != tuple(example.output):
        checks.failures.append("running the netlist on the counterexample gives other outputs than reported")
    elif violation(verdict.prop, list(example.input), values, key_bits_width=width) is None:
        checks.failures.append("the counterexample's outputs meet the property")
    else:
        checks.by("sortcheck re-run of the counterexample (model semantics)")


def _previous_digests(folder: Path, netlist_digest: str | None, verdict: Verdict) -> dict[str, str]:
    try:
        old = json.loads((folder / MANIFEST).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    if (old.get("netlist_sha256") != netlist_digest or old.get("engine") != verdict.engine
            or old.get("property") != verdict.prop.to_json()):
        return {}
    return {canonical(part.get("claim")).decode(): part.get("digest") for part in old.get("enumerated", [])
            if isinstance(part, dict)}


def _scope(method: str, certified: bool, checks: _Checks, gates: bool = False) -> str:
    if not certified:
        return ("not certified: " + "; ".join(checks.failures)) if checks.failures else "not certified"
    if method == "counterexample":
        return "the counterexample was run through the netlist again and breaks the property"
    parts = []
    if "drup" in method:
        parts.append(f"every SAT call the proof rests on has a DRUP proof that was checked ({checks.lemmas:,} "
                     f"lemmas; " + ", ".join(c for c in checks.checked_by if "drup" in c or c == "drat-trim") + ")")
    if "enumeration" in method:
        parts.append(f"every enumerated set of 0-1 vectors was evaluated again by independent code "
                     f"({checks.vectors:,} vectors)")
    if method == "order-relations":
        parts.append("the order relations were derived again by independent code")
    if gates:
        return ("; ".join(parts) + "; each CNF was found equal to the encoding of its claim for the circuit read "
                f"again from its file, and {checks.coverage}; trusted: {GATE_TRUSTED}")
    trusted = "the 0-1 principle"
    if "drup" in method:
        trusted = "the CNF encoding of each claim (encodings/comparator-network-cnf.md) and " + trusted
    composed = "; the parts were checked to add up to the whole network" if any(
        "composition" in c for c in checks.checked_by) else ""
    return "; ".join(parts) + composed + f"; trusted: {trusted}"


def _check_gates(material: CertificateMaterial, circuit: GateCircuit, verdict: Verdict, folder: Path,
                 checks: _Checks, manifest: dict) -> None:
    """The proofs of a gate circuit's questions, their encoding and their coverage of every threshold."""
    manifest["calls"] = _check_calls(material, folder, checks)
    problems, coverage = gate_problems(circuit, verdict.prop, material.calls)
    manifest["coverage"] = coverage
    checks.coverage = (f"the {coverage['questions']} questions cover all {coverage['thresholds']:,} thresholds "
                       f"{coverage['low']}..{coverage['high']}" if coverage["domain"] == "thresholds"
                       else "the miter question covers every input")
    checks.failures += problems
    if not problems:
        checks.by(GATE_ENCODING)
    if material.enumerated or material.relations is not None:
        checks.failures.append("the gate engine's certificate has parts this checker does not know")


def certify_result(netlist: Netlist | None, path: str, verdict: Verdict | None, root: Path) -> dict[str, Any]:
    """Write the certificate of one verdict under ``root`` and check it; ``{"certified", "certificate"}``."""
    if verdict is None or netlist is None:
        return {"certified": False, "certificate": {"method": "none", "files": [], "checked_by": [],
                                                    "scope": "not certified: the file was not checked"}}
    folder = directory_for(root, path)
    folder.mkdir(parents=True, exist_ok=True)
    checks = _Checks()
    netlist_digest = _sha256_file(path)
    manifest: dict[str, Any] = {"sortcheck_certificate": CERTIFICATE_VERSION, "netlist": path,
                                "netlist_sha256": netlist_digest, "property": verdict.prop.to_json(),
                                "engine": verdict.engine, "verdict": verdict.status.value}
    material = verdict.certificate
    if verdict.status == Status.REFUTED and verdict.counterexample is not None:
        method = "counterexample"
        manifest["counterexample"] = verdict.counterexample.to_json()
        _recheck_counterexample(netlist, verdict, checks)
    elif verdict.status != Status.PROVED:
        method = "none"
        checks.failures.append("the verdict is unknown: nothing was proved")
    elif material is None or not material.complete:
        method = "none"
        checks.failures.append(UNCERTIFIED.get(verdict.engine,
                                               f"the {verdict.engine} engine gives no certificate material for "
                                               f"this proof"))
    elif isinstance(netlist, GateCircuit):
        method = material.method
        _check_gates(material, netlist, verdict, folder, checks, manifest)
    elif not isinstance(netlist, ComparatorNetwork):
        method = "none"
        checks.failures.append(f"the {verdict.engine} engine gives no certificate material for this proof")
    else:
        method = material.method
        previous = _previous_digests(folder, netlist_digest, verdict)
        manifest["calls"] = _check_calls(material, folder, checks)
        manifest["enumerated"] = _check_enumerated(material, netlist, verdict.prop, previous, checks)
        if material.relations is not None:
            manifest["relations"] = material.relations
            if relations_sort(netlist.channels, netlist.comparators, material.relations["descending"]):
                checks.by("sortcheck order relations derived again (certify/reevaluate.py)")
            else:
                checks.failures.append("the order relations derived again do not show the outputs sorted")
        if not (material.calls or material.enumerated or material.relations):
            checks.failures.append("the certificate material is empty")
        _check_structure(material, netlist, checks)
    certified = not checks.failures and bool(checks.checked_by)
    certificate = {"method": method, "directory": str(folder), "files": [MANIFEST, *checks.files],
                   "checked_by": checks.checked_by,
                   "scope": _scope(method, certified, checks, isinstance(netlist, GateCircuit))}
    if checks.failures:
        certificate["failures"] = checks.failures
    manifest.update({"method": method, "certified": certified, "checked_by": checks.checked_by,
                     "failures": checks.failures})
    (folder / MANIFEST).write_text(json.dumps(manifest, indent=1) + "\n", encoding="utf-8")
    return {"certified": certified, "certificate": certificate}


def certify_file_result(result: FileResult, root: str | Path, words: int | None = None, width: int | None = None,
                        elaboration=None) -> FileResult:
    """``result`` (checked with ``Options(certify=True)``) with its certificate written under ``root`` and
    checked; the netlist is read again from its file."""
    netlist = None
    if result.verdict is not None:
        netlist = read_netlist(result.path, words, width, elaboration)
    try:
        certification = certify_result(netlist, result.path, result.verdict, Path(root))
    except OSError as error:
        certification = {"certified": False, "certificate": {
            "method": "none", "files": [], "checked_by": [],
            "scope": f"not certified: the certificate could not be written to {root} ({error.strerror or error})"}}
    return replace(result, certification=certification)
