"""Sweeps and Monte Carlo: many runs of one scenario with some keys changed.

A *case* is the base scenario (a dict in file units, as read from TOML) with a
few keys replaced. Keys are addressed by dotted paths as in
:func:`sim.scenario.set_key` (``tank.fill_pct``, ``leg.0.air_c``), and ``*``
stands for every entry of an array of tables (``leg.*.air_c`` sets the air
temperature of every leg).

Two ways to make cases:

* a **grid**: each varied key takes a list of values, and every combination
  is run (full factorial; the first key varies slowest);
* a **sample**: each uncertain key follows a distribution (normal, uniform or
  triangular), drawn with a seeded generator (Monte Carlo).

Every case is validated and run on its own. A case that fails validation
becomes a row with an ``error`` text instead of stopping the sweep. Cases run
serially, on a pool of local worker processes, or on a Dask distributed
cluster; the rows are the same bit for bit whichever ran them (each case is a
deterministic function of its scenario, and rows are put back in case order).

Trade units throughout: these are scenario-file edits and summary figures.
"""

from __future__ import annotations

import concurrent.futures as cf
import copy
import html
import json
import math
import multiprocessing
import operator
import os
import tempfile
import threading
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from decimal import Decimal, InvalidOperation
from pathlib import Path
from typing import Any

import numpy as np

from . import CAUTION, __version__
from .errors import InputError
from .results import json_safe

#: Largest number of cases one sweep may have (a guard against a typo such as
#: a step of 0.0001 that would queue millions of runs).
MAX_CASES = 200_000

#: Summary keys that are not per-case numbers (never sweep columns).
_TEXT_KEYS = ("title", "model", "cargo", "status", "message", "events", "caution")

#: Columns after the numeric summary keys.
TAIL_COLUMNS = ("status", "message", "error")

#: Keys whose values are names, and where the allowed names come from.
_CHOICE_SOURCES = {
    "cargo.fluid": ("sim.cargo", "CATALOGUE"),
    "model": ("sim.models", "MODELS"),
    "tank.shape": ("sim.geometry", "SHAPES"),
    "tank.heads": ("sim.geometry", "HEAD_TYPES"),
}


class ClusterError(RuntimeError):
    """A Dask cluster was reached but could not run the cases (e.g. ``sim`` missing there)."""


def _exception_words(exc: BaseException, limit: int = 300) -> str:
    """``Type: message`` on one line (whitespace collapsed, cut at ``limit``), with the
    first chained cause (often the ModuleNotFoundError a worker hit) appended."""
    def words(e):
        text = " ".join(str(e).split())
        return f"{type(e).__name__}: {text[:limit] + ('...' if len(text) > limit else '')}"

    out, cause = words(exc), exc.__cause__ or exc.__context__
    if cause is not None:
        out += f" (caused by {words(cause)})"
    return out.rstrip(".")


class SweepError(InputError):
    """Bad sweep input: each problem names the option, key, value and what is allowed."""


# ---------------------------------------------------------------------------
# Keys
# ---------------------------------------------------------------------------


def _is_index(part: str) -> bool:
    if part == "*":
        return True
    try:
        int(part)
    except ValueError:
        return False
    return True


def key_spec(data: dict, key: str):
    """The :class:`sim.scenario.KeySpec` of a dotted key, checked against a scenario dict.

    Parameters
    ----------
    data : dict
        Base scenario (file keys and units).
    key : str
        Dotted key: table names, 0-based indexes or ``*`` for arrays of tables,
        and a key of the last table, e.g. ``tank.fill_pct``, ``leg.*.air_c``,
        ``reliquefaction.outage.0.hours``.

    Returns
    -------
    KeySpec
        Type, range and meaning of the key.

    Raises
    ------
    SweepError
        For a key the scenario format does not know, an index out of range,
        or an array of tables addressed without an index; the message lists
        what is allowed at that point.
    """
    from .scenario import SCHEMA

    text = str(key).strip()
    parts = text.split(".")
    if not text or any(p.strip() == "" for p in parts):
        raise SweepError(f"{key!r}: empty part; write table.key, e.g. tank.fill_pct")
    table = ""
    node: Any = data
    i = 0
    while i < len(parts):
        part = parts[i]
        sub = f"{table}.{part}" if table else part
        last = i == len(parts) - 1
        if sub in SCHEMA:  # a table or an array of tables
            if last:
                raise SweepError(f"{text}: [{sub}] is a table; name one of its keys "
                                 f"({', '.join(SCHEMA[sub])})")
            node = node.get(part) if isinstance(node, dict) else None
            table = sub
            i += 1
            is_array = isinstance(node, list) or _is_index(parts[i])
            if is_array:
                index = parts[i]
                if not _is_index(index):
                    raise SweepError(
                        f"{text}: {sub} is an array of tables; give an index after it, "
                        f"counted from 0 (e.g. {sub}.0.{index} for the first entry) or * for "
                        f"every entry ({sub}.*.{index})")
                if not isinstance(node, list) or not node:
                    raise SweepError(f"{text}: the scenario has no [[{sub}]] entries")
                if index != "*":
                    k = int(index)
                    if not -len(node) <= k < len(node):
                        raise SweepError(
                            f"{text}: the scenario has {len(node)} [[{sub}]] entries; index "
                            f"{k} is out of range (0 to {len(node) - 1}, or * for every entry)")
                    node = node[k]
                else:
                    node = node[0]
                i += 1
            continue
        keys = SCHEMA[table]
        if part in keys and last:
            return keys[part]
        subtables = [t.split(".")[-1] for t in SCHEMA if t.startswith(f"{table}.") or
                     (table == "" and t and "." not in t)]
        where = f"[{table}]" if table else "the top level"
        allowed = list(keys) + [f"{t}.<key>" for t in subtables]
        import difflib

        close = difflib.get_close_matches(part, list(keys) + subtables, n=1, cutoff=0.6)
        hint = f" (did you mean {close[0]}?)" if close else ""
        raise SweepError(f"{text}: unknown key {part!r} in {where}{hint}; allowed: "
                         + ", ".join(allowed))
    raise SweepError(f"{text}: incomplete key; name one of the keys of [[{table}]] after it "
                     f"({', '.join(SCHEMA[table])}), e.g. {text}.{next(iter(SCHEMA[table]))}")


def _choices(key: str) -> list[str] | None:
    """Allowed names of a name-valued key, None if any string is allowed."""
    import importlib

    bare = ".".join(p for p in key.split(".") if not _is_index(p))
    source = _CHOICE_SOURCES.get(bare)
    if source is None:
        return None
    return list(getattr(importlib.import_module(source[0]), source[1]))


def apply_edits(data: dict, edits: Iterable[tuple[str, Any]]) -> dict:
    """Copy of a scenario dict with each ``(dotted_key, value)`` set.

    ``*`` in a key stands for every entry of an array of tables.

    Parameters
    ----------
    data : dict
        Scenario dict (file keys and units); not changed.
    edits : iterable of (str, object)
        Keys and their new values (file units).

    Returns
    -------
    dict
        Edited deep copy (not validated).
    """
    out = copy.deepcopy(data)
    for key, value in edits:
        _set_in_place(out, str(key).split("."), value)
    return out


def _set_in_place(node: Any, parts: list[str], value: Any) -> None:
    part = parts[0]
    if len(parts) == 1:
        if isinstance(node, list):
            node[int(part)] = value
        else:
            node[part] = value
        return
    if isinstance(node, list):
        targets = node if part == "*" else [node[int(part)]]
        for item in targets:
            _set_in_place(item, parts[1:], value)
        return
    child = node.get(part)
    if child is None:
        child = node[part] = {}
    _set_in_place(child, parts[1:], value)


# ---------------------------------------------------------------------------
# --vary: lists and ranges
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class Variation:
    """One varied key and its values (file units).

    Attributes
    ----------
    key : str  dotted key
    values : tuple  the values, in the order given
    """

    key: str
    values: tuple


def _number(token: str) -> int | float | None:
    """An int or float from text, None if it is not a number."""
    t = token.strip()
    try:
        return int(t)
    except ValueError:
        pass
    try:
        x = float(t)
    except ValueError:
        return None
    return x


def _decimal(token: str, option: str, key: str) -> Decimal:
    try:
        d = Decimal(token.strip())
    except InvalidOperation:
        raise SweepError(f"{option} {key}: {token.strip()!r} in a range is not a number") from None
    if not d.is_finite():
        raise SweepError(f"{option} {key}: {token.strip()!r} in a range must be a finite number")
    return d


def expand_range(text: str, key: str = "", option: str = "--vary") -> list[int | float]:
    """Values of a ``start:stop:step`` range; ``stop`` is included when it lands on the grid.

    Decimal arithmetic keeps the values exact as written: ``0.02:0.04:0.01``
    gives ``0.02, 0.03, 0.04`` (never 0.030000000000000002). All three parts
    whole numbers give ints. A negative step counts down.

    Parameters
    ----------
    text : str
        The range, e.g. ``"80:98:2"``.
    key, option : str
        Shown in messages.

    Returns
    -------
    list of int or float

    Raises
    ------
    SweepError
        If the range does not have three numbers, the step is zero or points
        away from the stop, or it gives more than :data:`MAX_CASES` values.

    Examples
    --------
    >>> expand_range("80:98:2")[-3:]
    [94, 96, 98]
    >>> expand_range("0.02:0.05:0.01")
    [0.02, 0.03, 0.04, 0.05]
    >>> expand_range("1:2:0.4")
    [1.0, 1.4, 1.8]
    """
    pieces = text.split(":")
    if len(pieces) != 3:
        raise SweepError(f"{option} {key}={text}: a range is start:stop:step with three numbers "
                         "(e.g. 80:98:2)")
    start, stop, step = (_decimal(p, option, key) for p in pieces)
    if step == 0:
        raise SweepError(f"{option} {key}={text}: the step must not be 0")
    if (stop < start) != (step < 0) and stop != start:
        raise SweepError(f"{option} {key}={text}: the step {step} goes away from the stop "
                         f"{stop}; use a {'negative' if stop < start else 'positive'} step")
    try:
        steps = (stop - start) / step
    except ArithmeticError:  # decimal.Overflow: exponents far beyond any real range
        steps = None
    # compare before int(): a range of 1e999999 steps would make a million-digit int
    if steps is None or steps >= MAX_CASES:
        many = ("far too many" if steps is None else str(int(steps) + 1)
                if steps < 10**15 else f"about {steps:.2E}")
        raise SweepError(f"{option} {key}={text}: {many} values; at most {MAX_CASES} allowed")
    count = int(steps) + 1  # int() truncates toward 0: floor here
    whole = all(d == d.to_integral_value() and "." not in p and "e" not in p.lower()
                for d, p in zip((start, stop, step), pieces, strict=True))
    values = [start + i * step for i in range(count)]
    return [int(v) if whole else float(v) for v in values]


def parse_values(key: str, text: str, option: str = "--vary") -> list:
    """Values of one ``--vary``: comma-separated items, each a value or a range.

    Numbers become int or float; other items stay strings (for name-valued
    keys such as ``cargo.fluid``).
    """
    if not text.strip():
        raise SweepError(f"{option} {key}=: no values; give a list (0.02,0.03) or a range "
                         "(80:98:2)")
    out: list = []
    for item in text.split(","):
        item = item.strip()
        if not item:
            raise SweepError(f"{option} {key}={text}: empty item between commas")
        if ":" in item:
            out.extend(expand_range(item, key, option))
        else:
            number = _number(item)
            out.append(item if number is None else number)
    return out


def _split_assignment(text: str, option: str, example: str) -> tuple[str, str]:
    if "=" not in text:
        hint = ""
        if text.strip().lower().endswith(".toml"):
            hint = " (the scenario file goes before the options: sweep FILE.toml --vary ...)"
        raise SweepError(f"{option} {text!r}: write KEY=VALUES, e.g. {example}{hint}")
    key, values = text.split("=", 1)
    key = key.strip()
    if not key:
        raise SweepError(f"{option} {text!r}: the key before '=' is missing, e.g. {example}")
    return key, values


def check_value(data: dict, key: str, value: Any, option: str = "--vary") -> None:
    """Check one value against its key's type and own range (not against other keys).

    Raises
    ------
    SweepError
        Naming the key, the value and what is allowed.
    """
    spec = key_spec(data, key)
    if spec.kind == "integer":
        if not isinstance(value, int) or isinstance(value, bool):
            raise SweepError(f"{option} {key}={value}: must be {spec.range_text()}")
        if not spec.in_range(value):
            raise SweepError(f"{option} {key}={value}: must be {spec.range_text()}")
        return
    if spec.kind == "number":
        if isinstance(value, str) or isinstance(value, bool):
            hint = ("; a range is written start:stop:step, a list a,b,c"
                    if option == "--vary" and isinstance(value, str) else "")
            raise SweepError(f"{option} {key}={value}: must be a number; allowed: "
                             f"{spec.range_text()}{hint}")
        if not math.isfinite(value) or not spec.in_range(value):
            raise SweepError(f"{option} {key}={value}: must be {spec.range_text()}")
        return
    if spec.kind == "choice":
        allowed = _choices(key)
        if allowed is not None and value not in allowed:
            raise SweepError(f"{option} {key}={value}: unknown name; allowed: "
                             + ", ".join(allowed))
        return
    if not isinstance(value, str) or not value.strip():
        raise SweepError(f"{option} {key}={value}: must be non-empty text")


def parse_vary(text: str, data: dict) -> Variation:
    """Parse and check one ``--vary KEY=VALUES`` against the base scenario dict.

    Parameters
    ----------
    text : str
        ``KEY=VALUES``: a comma list (``insulation.u_w_m2k=0.02,0.03``), a range
        ``start:stop:step`` (``tank.fill_pct=80:98:2``), or both mixed.
    data : dict
        Base scenario (file units).

    Returns
    -------
    Variation

    Raises
    ------
    SweepError
        Bad syntax, unknown key, or a value outside the key's allowed range.
    """
    key, values_text = _split_assignment(text, "--vary", "tank.fill_pct=80:98:2")
    try:
        key_spec(data, key)
    except SweepError as exc:
        raise SweepError([f"--vary {p}" for p in exc.problems]) from None
    values = parse_values(key, values_text)
    for value in values:
        check_value(data, key, value)
    return Variation(key, tuple(values))


def grid_cases(variations: Sequence[Variation]) -> list[tuple[tuple[str, Any], ...]]:
    """Every combination of the varied values (the first key varies slowest).

    Raises
    ------
    SweepError
        If a key is varied twice or the grid exceeds :data:`MAX_CASES`.
    """
    keys = [v.key for v in variations]
    dupes = sorted({k for k in keys if keys.count(k) > 1})
    if dupes:
        raise SweepError(f"--vary {dupes[0]} is given more than once; put all its values in one "
                         "--vary (comma list)")
    total = math.prod(len(v.values) for v in variations) if variations else 0
    if total > MAX_CASES:
        sizes = " x ".join(str(len(v.values)) for v in variations)
        raise SweepError(f"the sweep has {total} cases ({sizes}); at most {MAX_CASES} allowed: "
                         "use fewer values")
    cases: list[tuple] = [()]
    for v in variations:
        cases = [c + ((v.key, value),) for c in cases for value in v.values]
    return cases if variations else []


# ---------------------------------------------------------------------------
# --sample: distributions for Monte Carlo
# ---------------------------------------------------------------------------

#: Distribution name -> (parameter names, meaning).
DISTRIBUTIONS = {
    "normal": (("mean", "sd"), "normal:MEAN:SD (SD >= 0)"),
    "uniform": (("low", "high"), "uniform:LOW:HIGH (LOW < HIGH)"),
    "triangular": (("low", "mode", "high"), "triangular:LOW:MODE:HIGH (LOW <= MODE <= HIGH, "
                                             "LOW < HIGH)"),
}


@dataclass(frozen=True)
class Distribution:
    """An uncertain key and the distribution its values are drawn from (file units).

    Attributes
    ----------
    key : str
    kind : str  ``normal``, ``uniform`` or ``triangular``
    params : tuple of float  as in :data:`DISTRIBUTIONS`
    """

    key: str
    kind: str
    params: tuple

    def draw(self, rng: np.random.Generator, n: int) -> np.ndarray:
        """``n`` values from ``rng`` (one call per key, in the order keys were given)."""
        if self.kind == "normal":
            return rng.normal(self.params[0], self.params[1], n)
        if self.kind == "uniform":
            return rng.uniform(self.params[0], self.params[1], n)
        return rng.triangular(self.params[0], self.params[1], self.params[2], n)

    def describe(self) -> str:
        """``kind:p1:p2...`` as written on the command line."""
        return ":".join([self.kind, *(f"{p:g}" for p in self.params)])


def parse_sample(text: str, data: dict) -> Distribution:
    """Parse and check one ``--sample KEY=KIND:PARAMS``.

    Raises
    ------
    SweepError
        Bad syntax, unknown distribution or key, a key that does not take
        decimal numbers, or parameters out of order.
    """
    key, spec_text = _split_assignment(text, "--sample",
                                       "insulation.rated_bor_pct_day=normal:0.1:0.01")
    try:
        spec = key_spec(data, key)
    except SweepError as exc:
        raise SweepError([f"--sample {p}" for p in exc.problems]) from None
    if spec.kind != "number":
        raise SweepError(f"--sample {key}: only keys that take decimal numbers can be sampled; "
                         f"{key} takes {spec.range_text() if spec.kind == 'integer' else 'a name'}")
    pieces = spec_text.strip().split(":")
    kind = pieces[0].strip().lower()
    if kind not in DISTRIBUTIONS:
        raise SweepError(f"--sample {key}={spec_text}: unknown distribution {pieces[0]!r}; "
                         "allowed: " + ", ".join(d for _, d in DISTRIBUTIONS.values()))
    names, usage = DISTRIBUTIONS[kind]
    if len(pieces) - 1 != len(names):
        raise SweepError(f"--sample {key}={spec_text}: {kind} takes {len(names)} numbers: {usage}")
    params = []
    for name, piece in zip(names, pieces[1:], strict=True):
        x = _number(piece)
        if x is None or not math.isfinite(x):
            raise SweepError(f"--sample {key}={spec_text}: {name} = {piece!r} is not a finite "
                             f"number; {usage}")
        params.append(float(x))
    bad = ((kind == "normal" and params[1] < 0)
           or (kind == "uniform" and not params[0] < params[1])
           or (kind == "triangular" and not (params[0] <= params[1] <= params[2]
                                             and params[0] < params[2])))
    if bad:
        raise SweepError(f"--sample {key}={spec_text}: parameters out of order; {usage}")
    return Distribution(key, kind, tuple(params))


def sample_cases(distributions: Sequence[Distribution], n: int,
                 seed: int) -> list[tuple[tuple[str, Any], ...]]:
    """``n`` cases with every uncertain key drawn independently.

    Parameters
    ----------
    distributions : sequence of Distribution
        Drawn in this order from one generator, so the same seed and the same
        order of ``--sample`` options give the same cases.
    n : int
        Number of cases.
    seed : int
        Seed of ``numpy.random.default_rng``.
    """
    keys = [d.key for d in distributions]
    dupes = sorted({k for k in keys if keys.count(k) > 1})
    if dupes:
        raise SweepError(f"--sample {dupes[0]} is given more than once")
    if not 1 <= n <= MAX_CASES:
        raise SweepError(f"--cases {n}: must be a whole number from 1 to {MAX_CASES}")
    try:  # numpy's generator takes any whole number at or above 0, and nothing else
        bad_seed = isinstance(seed, bool) or operator.index(seed) < 0
    except TypeError:
        bad_seed = True
    if bad_seed:
        raise SweepError(f"--seed {seed}: must be a whole number at or above 0")
    rng = np.random.default_rng(seed)
    columns = [d.draw(rng, n) for d in distributions]
    return [tuple((d.key, float(col[i])) for d, col in zip(distributions, columns, strict=True))
            for i in range(n)]


# ---------------------------------------------------------------------------
# Running cases
# ---------------------------------------------------------------------------

_TABLE_LOCK = threading.Lock()


def _prepare_cargo(name: Any) -> None:
    """Build a cargo's saturation table under a lock.

    CoolProp ``AbstractState`` objects are not thread-safe; a Dask worker
    running several threads must not build the same table twice at once.
    Once built, a table is read-only and safe to share.
    """
    from .cargo import CATALOGUE, saturation_table

    if isinstance(name, str) and name in CATALOGUE:
        with _TABLE_LOCK:
            saturation_table(name)


def case_cargoes(base: dict, cases: Iterable[tuple]) -> set[str]:
    """Cargo names a set of cases uses (to build their tables before forking)."""
    cargo = base.get("cargo")
    names = {cargo.get("fluid") if isinstance(cargo, dict) else None}
    for edits in cases:
        for key, value in edits:
            if key == "cargo.fluid":
                names.add(value)
    return {n for n in names if isinstance(n, str)}


def numeric_summary(summary: Mapping) -> dict:
    """The per-case numbers of a run summary (None kept: e.g. no relief lift)."""
    out = {}
    for key, value in summary.items():
        if key in _TEXT_KEYS:
            continue
        if isinstance(value, np.generic):
            value = value.item()
        if value is None or (isinstance(value, int | float) and not isinstance(value, bool)):
            out[key] = value
    return out


def run_case(base: dict, edits: Sequence[tuple[str, Any]]) -> dict:
    """Validate and run one case; never raises.

    Parameters
    ----------
    base : dict
        Base scenario (file units).
    edits : sequence of (str, object)
        Keys and values of this case.

    Returns
    -------
    dict
        The numeric summary keys, then ``status``, ``message`` and ``error``
        (empty for a valid case; the validation problems joined by ``"; "``
        for an invalid one, whose ``status`` is ``"invalid"``).
    """
    from .scenario import ScenarioError, parse_scenario
    from .voyage import simulate

    data = apply_edits(base, edits)
    cargo = data.get("cargo")
    if isinstance(cargo, dict):
        _prepare_cargo(cargo.get("fluid"))
    try:
        scenario = parse_scenario(data)
    except ScenarioError as exc:
        return {"status": "invalid", "message": "", "error": "; ".join(exc.problems)}
    except Exception as exc:  # noqa: BLE001 - a bad case must not stop the sweep
        return {"status": "invalid", "message": "", "error": f"{type(exc).__name__}: {exc}"}
    try:
        result = simulate(scenario)
    except Exception as exc:  # noqa: BLE001
        return {"status": "failed", "message": "", "error": f"simulation failed: "
                f"{type(exc).__name__}: {exc}"}
    row = numeric_summary(result.summary)
    row.update(status=result.status, message=result.message, error="")
    return row


def run_chunk(base: dict, chunk: Sequence[tuple[int, tuple]]) -> tuple[str, list[tuple[int, dict]]]:
    """Run a chunk of ``(case number, edits)``; returns ``(sim version, [(number, row)])``.

    The unit of work sent to a worker process or a Dask worker. The version
    lets the caller notice workers running a different ``sim``.
    """
    return __version__, [(i, run_case(base, edits)) for i, edits in chunk]


def _warm_worker(cargoes: Sequence[str]) -> None:
    """Pool initializer: import CoolProp and build the tables once per worker process.

    Workers ignore Ctrl-C: the parent process cancels the sweep and stops them.
    """
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    for name in cargoes:
        _prepare_cargo(name)


def default_workers() -> int:
    """Cores this process may use."""
    try:
        return max(len(os.sched_getaffinity(0)), 1)
    except AttributeError:  # not on Linux
        return max(os.cpu_count() or 1, 1)


def _chunks(items: list, workers: int, largest: int = 32) -> list[list]:
    """Split work into about four chunks per worker, at most ``largest`` cases each.

    Several chunks per worker balance uneven run times; chunks (rather than
    single cases) keep the per-task overhead small.
    """
    if not items:
        return []
    size = max(1, min(largest, math.ceil(len(items) / (4 * workers))))
    return [items[i:i + size] for i in range(0, len(items), size)]


@dataclass
class RunInfo:
    """How a set of cases was run (not part of the rows).

    Attributes
    ----------
    executor : str  ``serial``, ``processes`` or ``dask``
    workers : int  local processes, or Dask worker threads
    address : str  Dask scheduler address ('' otherwise)
    seconds : float  wall time of the runs [s]
    warnings : list[str]
    """

    executor: str
    workers: int
    address: str = ""
    seconds: float = 0.0
    warnings: list[str] = field(default_factory=list)


def run_cases(base: dict, cases: Sequence[tuple], workers: int | None = None,
              scheduler: Any = None, progress: Callable[[int], None] | None = None,
              connect_timeout: str = "15s") -> tuple[list[dict], RunInfo]:
    """Run every case; rows come back in case order.

    Parameters
    ----------
    base : dict
        Base scenario (file units).
    cases : sequence of tuples of (key, value)
        The edits of each case.
    workers : int, optional
        Local worker processes; default all cores. 1 runs in this process.
        Ignored with ``scheduler``.
    scheduler : str or distributed.Client, optional
        Address of a Dask scheduler (``tcp://host:8786``) or a connected
        client: run the cases on that cluster.
    progress : callable, optional
        Called with the number of cases just finished.
    connect_timeout : str
        How long to try reaching a scheduler given by address (Dask time text).

    Returns
    -------
    rows : list of dict
        One row per case, as :func:`run_case` returns it.
    info : RunInfo
    """
    import time

    started = time.perf_counter()
    tick = progress or (lambda n: None)
    numbered = list(enumerate(cases))
    results: dict[int, dict] = {}
    if scheduler is not None:
        info = _run_dask(base, numbered, scheduler, tick, results, connect_timeout)
    else:
        workers = default_workers() if workers is None else int(workers)
        if workers < 1:
            raise SweepError(f"--workers {workers}: must be 1 or more")
        workers = min(workers, max(len(numbered), 1))
        if workers == 1:
            info = RunInfo("serial", 1)
            for i, edits in numbered:
                results[i] = run_case(base, edits)
                tick(1)
        else:
            info = _run_pool(base, numbered, workers, tick, results)
    info.seconds = time.perf_counter() - started
    return [results[i] for i in range(len(numbered))], info


def _pool_context():
    """``fork`` where the platform has it: children inherit CoolProp and the tables.

    A spawned child would import CoolProp again (3-4 s each); the initializer
    covers that case.
    """
    methods = multiprocessing.get_all_start_methods()
    return multiprocessing.get_context("fork" if "fork" in methods else "spawn")


def _run_pool(base, numbered, workers, tick, results) -> RunInfo:
    cargoes = sorted(case_cargoes(base, [e for _, e in numbered]))
    for name in cargoes:  # built once here, inherited by forked workers
        _prepare_cargo(name)
    info = RunInfo("processes", workers)
    pool = cf.ProcessPoolExecutor(max_workers=workers, mp_context=_pool_context(),
                                  initializer=_warm_worker, initargs=(cargoes,))
    try:
        futures = {pool.submit(run_chunk, base, chunk): len(chunk)
                   for chunk in _chunks(numbered, workers)}
        for fut in cf.as_completed(futures):
            _version, rows = fut.result()
            for i, row in rows:
                results[i] = row
            tick(futures[fut])
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown(wait=True)
    return info


def _run_dask(base, numbered, scheduler, tick, results, connect_timeout) -> RunInfo:
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise SweepError("--scheduler needs the dask distributed package: "
                         "pip install 'dask[distributed]'") from None
    own = isinstance(scheduler, str)
    if own:
        try:
            client = Client(scheduler, timeout=connect_timeout)
        except (OSError, TimeoutError, ValueError) as exc:
            raise SweepError(f"--scheduler {scheduler}: cannot connect to a Dask scheduler there "
                             f"({type(exc).__name__}: {exc})") from None
    else:
        client = scheduler
    try:
        threads = sum(client.nthreads().values())
        info = RunInfo("dask", threads, address=str(client.scheduler.address))
        chunks = _chunks(numbered, max(threads, 1))
        futures = [client.submit(run_chunk, base, chunk, pure=False) for chunk in chunks]
        sizes = {f.key: len(c) for f, c in zip(futures, chunks, strict=True)}
        versions = set()
        for fut in as_completed(futures):
            try:
                version, rows = fut.result()
            except Exception as exc:  # noqa: BLE001 - the cluster's failure, told plainly
                for other in futures:
                    other.cancel()
                raise ClusterError(
                    f"the Dask cluster at {info.address} could not run the cases: "
                    f"{_exception_words(exc)}. The scheduler "
                    "and every worker need the same Python environment as this machine "
                    "(sim and its requirements importable, same version); see "
                    "docs/sizing-and-sweeps.md") from None
            versions.add(version)
            for i, row in rows:
                results[i] = row
            tick(sizes[fut.key])
        other = sorted(versions - {__version__})
        if other:
            info.warnings.append(f"Dask workers run sim {', '.join(other)}, this machine "
                                 f"{__version__}: install the same version everywhere")
    finally:
        if own:
            client.close()
    return info


# ---------------------------------------------------------------------------
# Sweep results
# ---------------------------------------------------------------------------


@dataclass
class SweepResult:
    """Rows of a sweep or Monte Carlo, with what produced them.

    Attributes
    ----------
    title : str  base scenario title
    keys : list[str]  varied or sampled keys (the first columns)
    cases : list[tuple]  edits of each case
    rows : list[dict]  one per case: key values, numeric summary, status, message, error
    columns : list[str]  column order of the CSV
    variations : list[Variation]
    distributions : list[Distribution]
    seed : int or None
    info : RunInfo or None
    """

    title: str
    keys: list[str]
    cases: list[tuple]
    rows: list[dict]
    columns: list[str]
    variations: list[Variation] = field(default_factory=list)
    distributions: list[Distribution] = field(default_factory=list)
    seed: int | None = None
    info: RunInfo | None = None

    @property
    def invalid(self) -> list[int]:
        """Case numbers (0-based) whose row carries an error."""
        return [i for i, r in enumerate(self.rows) if r.get("error")]

    def frame(self):
        """The rows as a pandas DataFrame in CSV column order."""
        import pandas as pd

        return pd.DataFrame(self.rows, columns=self.columns)


def assemble(title: str, cases: Sequence[tuple], outcomes: Sequence[dict]) -> tuple[list, list]:
    """Rows (key values first) and the column order for a set of outcomes."""
    keys = [k for k, _ in cases[0]] if cases else []
    numeric: list[str] = []
    seen = set(keys) | set(TAIL_COLUMNS)
    for outcome in outcomes:
        for k in outcome:
            if k not in seen:
                seen.add(k)
                numeric.append(k)
    rows = []
    for edits, outcome in zip(cases, outcomes, strict=True):
        row = dict(edits)
        row.update({k: outcome.get(k) for k in numeric})
        row.update({k: outcome.get(k, "") for k in TAIL_COLUMNS})
        rows.append(row)
    return rows, keys + numeric + list(TAIL_COLUMNS)


#: Keys at which a rated boil-off is calibrated when ``rated_fill_pct`` is not given.
RATING_FOLLOWS = ("tank.fill_pct", "tank.pressure_barg")


def rating_notes(data: dict, keys: Sequence[str]) -> list[str]:
    """Warn when varied keys also move a U-value calibrated from a rated boil-off.

    A rated boil-off is calibrated at the case's own initial pressure, and at its
    own fill unless ``insulation.rated_fill_pct`` is given: varying those keys
    then varies the insulation as well.
    """
    ins = data.get("insulation") if isinstance(data.get("insulation"), dict) else {}
    if "rated_bor_pct_day" not in ins or "u_w_m2k" in ins:
        return []
    moving = [k for k in keys if k in RATING_FOLLOWS
              and not (k == "tank.fill_pct" and "rated_fill_pct" in ins)]
    if not moving:
        return []
    fix = ("insulation.rated_fill_pct, or u_w_m2k," if moving == ["tank.fill_pct"]
           else "a u_w_m2k")
    return [f"the U-value is calibrated from insulation.rated_bor_pct_day for each case, and "
            f"{', '.join(dict.fromkeys(moving))} moves that calibration: the insulation "
            f"changes from case to case (give {fix} to keep it fixed)"]


def run_sweep(data: dict, variations: Sequence[Variation], workers: int | None = None,
              scheduler: Any = None, progress: Callable[[int], None] | None = None) -> SweepResult:
    """Full-factorial sweep of a scenario dict.

    Parameters
    ----------
    data : dict
        Base scenario (file units), e.g. ``Scenario.raw``.
    variations : sequence of Variation
        From :func:`parse_vary` (or built directly).
    workers, scheduler, progress
        As in :func:`run_cases`.

    Returns
    -------
    SweepResult
    """
    cases = grid_cases(variations)
    if not cases:
        raise SweepError("nothing to vary: give at least one --vary KEY=VALUES")
    outcomes, info = run_cases(data, cases, workers, scheduler, progress)
    info.warnings.extend(rating_notes(data, [v.key for v in variations]))
    rows, columns = assemble(str(data.get("title", "")), cases, outcomes)
    return SweepResult(str(data.get("title", "")), [v.key for v in variations], cases, rows,
                       columns, variations=list(variations), info=info)


def run_uncertainty(data: dict, distributions: Sequence[Distribution], n: int,
                    seed: int | None = None, workers: int | None = None, scheduler: Any = None,
                    progress: Callable[[int], None] | None = None) -> SweepResult:
    """Monte Carlo: ``n`` cases with the uncertain keys drawn from their distributions.

    Parameters
    ----------
    data : dict
        Base scenario (file units).
    distributions : sequence of Distribution
        From :func:`parse_sample`.
    n : int
        Number of cases.
    seed : int, optional
        Generator seed; a fresh one is drawn (and recorded) if not given.

    Returns
    -------
    SweepResult
        With ``seed`` set; see :func:`percentiles` for P10/P50/P90.
    """
    if not distributions:
        raise SweepError("nothing to sample: give at least one --sample KEY=KIND:PARAMS")
    if seed is None:
        seed = int(np.random.SeedSequence().entropy % (2**63))
    cases = sample_cases(distributions, n, seed)
    outcomes, info = run_cases(data, cases, workers, scheduler, progress)
    info.warnings.extend(rating_notes(data, [d.key for d in distributions]))
    rows, columns = assemble(str(data.get("title", "")), cases, outcomes)
    return SweepResult(str(data.get("title", "")), [d.key for d in distributions], cases, rows,
                       columns, distributions=list(distributions), seed=seed, info=info)


#: Outputs summarised by P10/P50/P90 in a Monte Carlo.
PERCENTILE_KEYS = ("time_to_relief_h", "cargo_loss_t")


def quantile(values: Sequence[float], q: float) -> float:
    """Linear-interpolation quantile (numpy's default method) that tolerates +inf.

    ``+inf`` stands for "beyond the voyage" (no relief lift). A quantile that
    needs an infinite value with non-zero weight is ``+inf``; otherwise it is
    the usual interpolation between the two neighbouring order statistics.

    Examples
    --------
    >>> quantile([1.0, 2.0, 3.0, 4.0], 0.5)
    2.5
    >>> quantile([1.0, 2.0, math.inf, math.inf], 0.1)
    1.3
    >>> quantile([1.0, 2.0, math.inf, math.inf], 0.9)
    inf
    """
    ordered = sorted(float(v) for v in values)
    if not ordered:
        return math.nan
    h = (len(ordered) - 1) * q
    lo = math.floor(h)
    hi = min(lo + 1, len(ordered) - 1)
    frac = h - lo
    a, b = ordered[lo], ordered[hi]
    if frac == 0.0:
        return a
    if math.isinf(a) or math.isinf(b):
        return math.inf
    return a + (b - a) * frac


def percentiles(result: SweepResult, keys: Sequence[str] = PERCENTILE_KEYS) -> dict:
    """P10, P50 and P90 of the Monte Carlo outputs over the valid cases.

    P10 is the value 10 % of the valid cases fall below. For
    ``time_to_relief_h`` a case whose relief valve never lifts counts as
    lifting after the end of the voyage: a percentile that falls among those
    cases is None (JSON null) with ``beyond_voyage`` listing it.

    Returns
    -------
    dict
        ``{key: {"p10", "p50", "p90", "valid_cases", "beyond_voyage": [...],
        "lifted_cases"}}`` (``lifted_cases`` only for the time to relief).
    """
    valid = [r for r in result.rows if not r.get("error")]
    out: dict = {}
    for key in keys:
        raw = [r.get(key) for r in valid]
        if key == "time_to_relief_h":
            values = [math.inf if v is None else float(v) for v in raw]
        else:
            values = [float(v) for v in raw if v is not None]
        entry: dict = {"valid_cases": len(values)}
        beyond = []
        for name, q in (("p10", 0.10), ("p50", 0.50), ("p90", 0.90)):
            x = quantile(values, q) if values else math.nan
            if math.isinf(x):
                beyond.append(name)
            entry[name] = x if math.isfinite(x) else None
        if key == "time_to_relief_h":
            entry["lifted_cases"] = sum(1 for v in values if math.isfinite(v))
            entry["beyond_voyage"] = beyond
        out[key] = entry
    return out


# ---------------------------------------------------------------------------
# Output files
# ---------------------------------------------------------------------------


def to_json(payload: dict) -> str:
    """JSON text of an output payload (NaN and inf written as null)."""
    return json.dumps(json_safe(payload), indent=2)


def sweep_csv(result: SweepResult) -> str:
    """``sweep.csv``: one row per case, floats written to round-trip exactly."""
    return result.frame().to_csv(index=False, na_rep="", lineterminator="\n")


def sweep_payload(result: SweepResult, source: str = "") -> dict:
    """The ``sweep.json`` content."""
    payload: dict = {
        "title": result.title,
        "scenario": source,
        "kind": "uncertainty" if result.distributions else "sweep",
        "case_count": len(result.rows),
        "invalid_count": len(result.invalid),
        "keys": result.keys,
    }
    if result.variations:
        payload["vary"] = {v.key: list(v.values) for v in result.variations}
    if result.distributions:
        payload["sample"] = {d.key: {"distribution": d.kind, **dict(zip(
            DISTRIBUTIONS[d.kind][0], d.params, strict=True))} for d in result.distributions}
        payload["seed"] = result.seed
        payload["percentiles"] = percentiles(result)
    if result.info is not None:
        payload["run"] = {"executor": result.info.executor, "workers": result.info.workers,
                          "address": result.info.address,
                          "seconds": round(result.info.seconds, 3),
                          "warnings": result.info.warnings}
    payload["columns"] = result.columns
    payload["rows"] = [dict(r, case=i) for i, r in enumerate(result.rows)]
    payload["caution"] = CAUTION
    return payload


def write_files(out_dir: str | os.PathLike, payloads: Mapping[str, str]) -> list[Path]:
    """Write text files into a folder: all to temporary names first, then renamed.

    A failure part-way leaves no half-written file behind.

    Raises
    ------
    OSError
        If the folder cannot be created or written.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    mask = os.umask(0)  # read the umask (it can only be read by setting it) ...
    os.umask(mask)  # ... and put it back
    temps: list[tuple[str, Path]] = []
    written = []
    try:
        for name, text in payloads.items():
            fd, tmp = tempfile.mkstemp(dir=out, prefix=f".{name}.", suffix=".tmp")
            temps.append((tmp, out / name))
            with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
                fh.write(text)
            os.chmod(tmp, 0o666 & ~mask)  # mkstemp makes 0600; give the usual file mode
        for tmp, final in temps:
            os.replace(tmp, final)
            written.append(final)
    finally:
        for tmp, _ in temps:
            if os.path.exists(tmp):
                os.unlink(tmp)
    return written


def html_page(figures: Sequence, title: str) -> str:
    """A self-contained HTML page (plotly.js embedded once: works offline) with the caution."""
    import plotly.io as pio

    parts = [pio.to_html(fig, full_html=False, include_plotlyjs=(i == 0),
                         config={"displaylogo": False}) for i, fig in enumerate(figures)]
    head = html.escape(title)
    return (
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
        f"<title>{head}</title>"
        "<style>body{font-family:Helvetica,Arial,sans-serif;margin:24px;color:#23313b}"
        "p.caution{border-left:4px solid #b58b24;padding:6px 12px;background:#faf6ea}</style>"
        f"</head><body><h1>{head}</h1><p class=\"caution\">{html.escape(CAUTION)}</p>\n"
        + "\n".join(parts) + "\n</body></html>\n"
    )


#: Outputs drawn on the sweep chart: column -> axis title.
CHART_OUTPUTS = {
    "time_to_relief_h": "Time to relief-valve lift [h]",
    "max_pressure_barg": "Highest pressure [barg]",
    "cargo_loss_t": "Cargo lost [t]",
    "boil_off_t": "Boil-off [t]",
    "reliquefied_t": "Reliquefied [t]",
    "final_fill_pct": "Arrival fill [%]",
}

_COLOURS = ("#1d4e6b", "#c2593f", "#3b8c6e", "#8a6fb0", "#b58b24", "#5d6d7e", "#2f3b45")


def _label(value) -> str:
    return f"{value:g}" if isinstance(value, float) else str(value)


def sweep_figure(result: SweepResult):
    """Chart of a sweep: the main outputs against the first varied key.

    With two varied keys there is one line per value of the second; with
    three or more the cases are drawn as parallel coordinates. Invalid cases
    are left out. Cases whose relief valve never lifts have no point on the
    time-to-relief panel.
    """
    import plotly.graph_objects as go
    from plotly.subplots import make_subplots

    valid = [r for r in result.rows if not r.get("error")]
    outputs = [k for k in CHART_OUTPUTS if any(r.get(k) is not None for r in valid)]
    title = f"Sweep: {result.title}"
    if len(result.keys) >= 3 or (valid and not all(
            isinstance(r[result.keys[0]], int | float) for r in valid)):
        dims = []
        for k in result.keys + outputs:
            vals = [r.get(k) for r in valid]
            if all(isinstance(v, int | float) for v in vals):
                dims.append({"label": k, "values": vals})
        fig = go.Figure(go.Parcoords(dimensions=dims, line={"color": "#1d4e6b"}))
        fig.update_layout(title=title, height=520, meta={"chart": "sweep"})
        return fig
    x_key = result.keys[0]
    group_key = result.keys[1] if len(result.keys) == 2 else None
    groups = sorted({r[group_key] for r in valid}, key=lambda v: (str(type(v)), v)) \
        if group_key else [None]
    rows = math.ceil(len(outputs) / 2) or 1
    fig = make_subplots(rows=rows, cols=2, subplot_titles=[CHART_OUTPUTS[k] for k in outputs],
                        horizontal_spacing=0.1, vertical_spacing=0.12)
    for gi, g in enumerate(groups):
        members = [r for r in valid if group_key is None or r[group_key] == g]
        members.sort(key=lambda r: r[x_key])
        for oi, out in enumerate(outputs):
            fig.add_trace(go.Scatter(
                x=[r[x_key] for r in members], y=[r.get(out) for r in members],
                mode="lines+markers", name=f"{group_key} = {_label(g)}" if group_key else out,
                legendgroup=str(g), showlegend=bool(group_key) and oi == 0,
                line={"color": _COLOURS[gi % len(_COLOURS)]}, meta=out),
                row=oi // 2 + 1, col=oi % 2 + 1)
            fig.update_xaxes(title_text=x_key, row=oi // 2 + 1, col=oi % 2 + 1)
    fig.update_yaxes(tickformat=".4~g")
    for oi, out in enumerate(outputs):
        ys = [r[out] for r in valid if r.get(out) is not None]
        if ys and max(ys) - min(ys) <= 1e-6 * max(abs(max(ys)), 1e-9):
            # a held pressure varies by solver noise only: show it flat, not as 0.12000000001
            mid, pad = 0.5 * (max(ys) + min(ys)), max(0.05 * abs(max(ys)), 1e-3)
            span = [mid - pad, mid + pad] if mid != 0.0 else [-0.05, 1.0]  # all zero: 0 to 1
            fig.update_yaxes(range=span, row=oi // 2 + 1, col=oi % 2 + 1)
    # no figure title (the page has one): the legend of the second key goes on top
    fig.update_layout(height=300 * rows + 80, meta={"chart": "sweep", "title": title},
                      showlegend=bool(group_key), margin={"t": 80},
                      legend={"orientation": "h", "yanchor": "bottom", "y": 1.02, "x": 0.0})
    return fig


def uncertainty_figures(result: SweepResult) -> list:
    """Histograms of the time to relief-valve lift and the cargo lost, P10/P50/P90 marked."""
    import plotly.graph_objects as go

    stats = percentiles(result)
    valid = [r for r in result.rows if not r.get("error")]
    figures = []
    words = {"time_to_relief_h": "Time to relief-valve lift [h]", "cargo_loss_t": "Cargo lost [t]"}
    for key, label in words.items():
        values = [r[key] for r in valid if r.get(key) is not None]
        fig = go.Figure(go.Histogram(x=values, marker={"color": "#1d4e6b"}, meta=key,
                                     name=label))
        for name, dash in (("p10", "dot"), ("p50", "solid"), ("p90", "dash")):
            x = stats[key][name]
            if x is not None:
                fig.add_vline(x=x, line_dash=dash, line_color="#c2593f",
                              annotation_text=f"{name.upper()} {x:.4g}")
        note = ""
        if key == "time_to_relief_h":
            never = stats[key]["valid_cases"] - stats[key]["lifted_cases"]
            note = f" ({never} of {stats[key]['valid_cases']} cases never lift: not drawn)"
        fig.update_layout(title=f"{label}, {len(valid)} cases{note}", xaxis_title=label,
                          yaxis_title="cases", height=380, meta={"chart": key}, bargap=0.05)
        figures.append(fig)
    return figures


def output_files(result: SweepResult, source: str = "") -> dict[str, str]:
    """Name -> text of every file a sweep writes (``sweep.csv``, ``sweep.json``, a chart)."""
    files = {"sweep.csv": sweep_csv(result),
             "sweep.json": to_json(sweep_payload(result, source))}
    if result.distributions:
        files["uncertainty.html"] = html_page(uncertainty_figures(result),
                                              f"Uncertainty: {result.title}")
    else:
        files["sweep.html"] = html_page([sweep_figure(result)], f"Sweep: {result.title}")
    return files
