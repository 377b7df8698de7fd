"""The BDD manager: CUDD through ``dd.cudd`` when it imports, else dd's pure-Python BDDs, under one interface.

:class:`BddManager` offers what the engine needs and nothing more: variables
in a fixed order, the Boolean operations, a count of live nodes and a node
limit.  Both backends give the same functions (BDDs are canonical for a
variable order), so verdicts and counterexamples do not depend on the
backend; only speed does.

The node limit is enforced in two ways.  Between operations,
:meth:`BddManager.check_size` compares the live node count with the limit
and raises :class:`NodeLimitReached`.  Inside one CUDD operation (which
cannot be interrupted) a memory cap of about :data:`BYTES_PER_NODE` bytes per
node of the limit makes CUDD give up when the operation alone grows far past
the limit; dd then raises, and the manager turns that into
:class:`NodeLimitReached` too.  The pure-Python backend has no such cap: an
operation runs to its end (the engine runs in a process that can be ended).

>>> manager = BddManager(["a", "b"], backend="python")
>>> a, b = manager.variable("a"), manager.variable("b")
>>> manager.is_false(manager.and_(a, manager.not_(a))), manager.is_true(manager.or_(a, manager.not_(a)))
(True, True)
>>> manager.backend, manager.order
('python', ('a', 'b'))
"""

from __future__ import annotations

import os
import time
import warnings
from typing import Any, Callable, Sequence

#: Backends: CUDD (compiled, from the ``dd`` wheel) and dd's pure-Python BDDs.
BACKENDS = ("cudd", "python")

#: Memory CUDD may use per node of the node limit before an operation gives up (unique table, cache and nodes
#: together took about 100 bytes per node when an operation blew up; twice that leaves room for the cache).
BYTES_PER_NODE = 200

#: Memory CUDD may always use, whatever the node limit.
BASE_BYTES = 64 << 20

#: A count of CUDD's live nodes scans its tables (about 3 ms at 150,000 nodes, microseconds when small): the next
#: count waits this many times as long as the last one took, so counting costs at most a few per cent.
COUNT_SPACING = 20


class NodeLimitReached(Exception):
    """The BDDs grew past the node limit (``nodes`` is the count when that was noticed)."""

    def __init__(self, nodes: int, limit: int):
        super().__init__(f"{nodes:,} live BDD nodes, past the limit of {limit:,}")
        self.nodes, self.limit = nodes, limit


def cudd_available() -> bool:
    """Whether ``dd.cudd`` (CUDD, compiled) imports on this machine."""
    try:
        import dd.cudd  # noqa: F401
    except ImportError:
        return False
    return True


def dd_available() -> bool:
    """Whether the ``dd`` package imports at all (its pure-Python BDDs need nothing else)."""
    try:
        import dd.autoref  # noqa: F401
    except ImportError:
        return False
    return True


def choose_backend(requested: str | None = None) -> str:
    """``requested`` when given, else ``"cudd"`` when it imports, else ``"python"``.

    >>> choose_backend("python")
    'python'
    """
    if requested is not None:
        if requested not in BACKENDS:
            raise ValueError(f"unknown BDD backend {requested!r} (expected one of {', '.join(BACKENDS)})")
        return requested
    return "cudd" if cudd_available() else "python"


class BddManager:
    """BDDs over named variables in a fixed order (the first name is the top level).

    Parameters
    ----------
    order : sequence of str
        Every variable, top level first.
    backend : str or None
        ``"cudd"``, ``"python"`` or None for the best that imports.
    node_limit : int or None
        Most live nodes; :meth:`check_size` raises :class:`NodeLimitReached` past it.
    reorder : bool
        Let the backend reorder variables dynamically (CUDD: group sifting, each
        group of ``groups`` kept together; pure Python: sifting).
    groups : sequence of (str, int)
        Blocks of adjacent variables (first name, size) that reordering moves as one.
    """

    def __init__(self, order: Sequence[str], backend: str | None = None, node_limit: int | None = None,
                 reorder: bool = False, groups: Sequence[tuple[str, int]] = ()):
        self.backend = choose_backend(backend)
        self.order = tuple(order)
        self.node_limit = node_limit
        self.peak = 0
        self.slowest = 0.0
        self._next_count = 0.0
        if self.backend == "cudd":
            import dd.cudd as module
            memory = BASE_BYTES + BYTES_PER_NODE * (node_limit or 0)
            self.bdd = module.BDD(memory_estimate=min(memory, _physical_memory() // 2) if node_limit else None,
                                  initial_cache_size=1 << 18)
            self.bdd.configure(reordering=False)
            if node_limit:
                self.bdd.configure(max_memory=memory)
        else:
            import dd.autoref as module
            self.bdd = module.BDD()
            self.bdd.configure(reordering=False)
        self.bdd.declare(*self.order)
        if reorder:
            if self.backend == "cudd" and groups:
                self.bdd.group({first: size for first, size in groups if size > 1})
            self.bdd.configure(reordering=True)
        self.true, self.false = self.bdd.true, self.bdd.false

    # -- operations ------------------------------------------------------------------------------------------

    def _call(self, operation: Callable[..., Any], *arguments: Any) -> Any:
        started = time.perf_counter()
        try:
            return operation(*arguments)
        except (RuntimeError, MemoryError, ValueError) as error:
            # CUDD gave up at its memory cap: dd raises RuntimeError from apply, ValueError ("NULL") from ite
            gave_up = not isinstance(error, ValueError) or "NULL" in str(error)
            if self.backend == "cudd" and self.node_limit and gave_up:
                raise NodeLimitReached(max(self.live_nodes(), self.peak_nodes()), self.node_limit) from error
            raise
        finally:
            self.slowest = max(self.slowest, time.perf_counter() - started)

    def variable(self, name: str) -> Any:
        """The function of one variable."""
        return self.bdd.var(name)

    def not_(self, u: Any) -> Any:
        return self._call(self.bdd.apply, "not", u)

    def and_(self, u: Any, v: Any) -> Any:
        return self._call(self.bdd.apply, "and", u, v)

    def or_(self, u: Any, v: Any) -> Any:
        return self._call(self.bdd.apply, "or", u, v)

    def xor(self, u: Any, v: Any) -> Any:
        return self._call(self.bdd.apply, "xor", u, v)

    def ite(self, condition: Any, when_true: Any, when_false: Any) -> Any:
        """``when_true`` where ``condition`` holds, else ``when_false``."""
        return self._call(self.bdd.ite, condition, when_true, when_false)

    def is_false(self, u: Any) -> bool:
        return u == self.false

    def is_true(self, u: Any) -> bool:
        return u == self.true

    # -- sizes -----------------------------------------------------------------------------------------------

    def live_nodes(self) -> int:
        """Nodes the manager holds for live functions now."""
        if self.backend == "cudd":
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")  # dd warns about a changed unit of an unrelated statistic
                return int(self.bdd.statistics(exact_node_count=True)["n_nodes"])
        return len(self.bdd)

    def peak_nodes(self) -> int:
        """The most live nodes counted so far (by :meth:`check_size`)."""
        return self.peak

    def size(self, functions: Sequence[Any]) -> int:
        """Nodes of the shared BDD of ``functions`` (constants included)."""
        functions = list(functions)
        if not functions:
            return 0
        if self.backend == "cudd":
            import dd.cudd as module
            return int(module.count_nodes(functions))
        return len(functions[0].manager.descendants([u.node for u in functions]))

    def check_size(self, force: bool = False) -> None:
        """Raise :class:`NodeLimitReached` when the live nodes exceed the limit.

        The count is exact but not free for CUDD, so unless ``force`` it is
        skipped until :data:`COUNT_SPACING` times the last count's duration
        has passed.
        """
        now = time.monotonic()
        if not force and now < self._next_count:
            return
        nodes = self.live_nodes()
        self._next_count = now + COUNT_SPACING * (time.monotonic() - now)
        if self.node_limit and nodes > self.node_limit and self.backend == "python":
            self.bdd.collect_garbage()  # dd's own table keeps dead nodes until collected
            nodes = self.live_nodes()
        self.peak = max(self.peak, nodes)
        if self.node_limit and nodes > self.node_limit:
            raise NodeLimitReached(nodes, self.node_limit)

    def reorderings(self) -> int:
        """Dynamic reorderings so far (CUDD; 0 for the pure-Python backend, which does not count them)."""
        if self.backend != "cudd":
            return 0
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return int(self.bdd.statistics()["n_reorderings"])

    def current_order(self) -> tuple[str, ...]:
        """The variables by level now (differs from :attr:`order` after dynamic reordering)."""
        levels = self.bdd.var_levels
        return tuple(sorted(levels, key=levels.__getitem__))



def _physical_memory() -> int:
    """Bytes of memory of this machine (CUDD refuses an estimate at or above it); 8 GiB when unknown."""
    try:
        return os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    except (ValueError, OSError, AttributeError):
        return 8 << 30
