"""Scans of scanned frames: the engine that holds the rows (DuckDB, Spark) computes the numbers.

A *scanned frame* keeps its rows in the engine (a DuckDB relation, a PySpark DataFrame); a
*scan* asks that engine for column facts, column details or the grouped binned table (the
contract: the scan protocol shared with src/bridge/protocol.ts). The front end plans bin edges
from these numbers with the code of the in-memory engine, so every number equals what numpy
computes on the same column read in the frame's row order:

* counts, minimum, maximum, level counts, distinct values and the grouped table are exact
  aggregates in the engine;
* order statistics are exact ranks of the sorted values (no approximate percentiles);
* standard deviation and skewness are numpy's own, on the column's non-missing values read as
  float64 in row order (numpy's pairwise summation depends on the order and the length);
* bin codes are computed in the engine from the edges as exact double constants (DuckDB
  constant expressions, Spark literal Columns): no number is ever written into SQL text.

Row order is the order in which the engine returns the frame's rows: DuckDB's insertion order
(its default ``preserve_insertion_order``), Spark's partition order (``collect()``).

Each backend is one class behind :class:`ScanEngine`; the shared logic (validation, numpy,
reply shapes) lives in the module functions, so tests call them without a kernel.
"""

from __future__ import annotations

import logging
import math
import re
import sys
import threading
import uuid
from collections import Counter
from dataclasses import dataclass
from typing import Any, Callable, Iterable, Mapping, Sequence

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc

from ._errors import BridgeError

#: Highest level count the automatic binning keeps as categories (src/engine's AUTO_MAX_LEVELS);
#: facts count distinct values up to one more than this.
AUTO_MAX_LEVELS = 10
#: Default cap of distinct rows of a grouped table (the contract's ``max_distinct_rows``).
DEFAULT_MAX_DISTINCT_ROWS = 5_000_000
#: Longest engine message carried in an error's detail.
ENGINE_MESSAGE_MAX = 4000
#: Column kinds a scan supports.
SCAN_KINDS = ("numeric", "bool", "string", "categorical")
#: Steps of a scan request.
SCAN_STEPS = ("facts", "details", "group")
#: Seconds between the repeated interrupts after a cancel, until the running step returns.
INTERRUPT_REPEAT_SECONDS = 0.05
#: Equal-width buckets over a column's range for its exact order statistics (our choice, as
#: src/cli/duckdb.ts's RANK_BUCKETS): one grouped scan gives each bucket's count, minimum and
#: maximum; a wanted rank is then its bucket's minimum or maximum, or one of the values of the
#: few buckets holding ranks, fetched and sorted here.
RANK_BUCKETS = 65_536
#: Most values fetched in one query to sort here (our choice: 8 MB of doubles, as
#: src/cli/duckdb.ts's RANK_FETCH_LIMIT); a bucket holding more is a heavy bucket, ranked by
#: the engine itself over that bucket alone.
RANK_FETCH_LIMIT = 1 << 20
#: How many times Spark buckets a heavy bucket again before it sorts the bucket's values
#: (our choice: with 65,536 buckets, four levels split any range of doubles to single values).
RANK_DEPTH = 4

ScanDouble = Any  # float | 'Infinity' | '-Infinity'

_log = logging.getLogger(__name__)


class ScanCancelled(Exception):
    """The scan was cancelled from the front end."""


class EngineFailure(Exception):
    """The engine refused or failed a query or job; carries the engine's own message."""

    def __init__(self, engine: str, message: str) -> None:
        super().__init__(message)
        self.engine = engine
        self.engine_message = message


def scan_double(value: float) -> ScanDouble:
    """A double for JSON: ±Inf as text, −0 as 0 (NaN never reaches here: NaN is missing)."""
    value = float(value)
    if math.isinf(value):
        return "Infinity" if value > 0 else "-Infinity"
    return value + 0.0


def quote_duckdb(name: str) -> str:
    """A DuckDB identifier in double quotes, inner quotes doubled (SQL's quoting)."""
    return '"' + name.replace('"', '""') + '"'


def quote_spark(name: str) -> str:
    """A Spark column name in backticks, inner backticks doubled (Spark SQL's quoting)."""
    return "`" + name.replace("`", "``") + "`"


# --- column kinds of the engines' types ----------------------------------------------------

_DUCKDB_NUMERIC = frozenset(
    "TINYINT SMALLINT INTEGER BIGINT HUGEINT UTINYINT USMALLINT UINTEGER UBIGINT UHUGEINT FLOAT DOUBLE".split()
)
_DUCKDB_INTEGERS = frozenset("TINYINT SMALLINT INTEGER BIGINT HUGEINT UTINYINT USMALLINT UINTEGER UBIGINT UHUGEINT".split())
#: Integer types whose values may not all be doubles exactly (beyond ±2^53).
_DUCKDB_WIDE = frozenset("BIGINT HUGEINT UBIGINT UHUGEINT".split())


def duckdb_column_kind(type_name: str) -> str:
    """The column kind of a DuckDB type, by its name (``str(type)``)."""
    name = type_name.upper()
    if name == "BOOLEAN":
        return "bool"
    if name in _DUCKDB_NUMERIC or name.startswith("DECIMAL"):
        return "numeric"
    if name == "VARCHAR":
        return "string"
    if name.startswith("ENUM"):
        return "categorical"
    if name == "DATE" or name.startswith("TIMESTAMP"):
        return "datetime"
    if name == "INTERVAL":
        return "timedelta"
    return "other"


def spark_column_kind(data_type: Any) -> str:
    """The column kind of a Spark ``DataType``."""
    from pyspark.sql import types as T

    if isinstance(data_type, T.BooleanType):
        return "bool"
    if isinstance(data_type, (T.ByteType, T.ShortType, T.IntegerType, T.LongType, T.FloatType, T.DoubleType, T.DecimalType)):
        return "numeric"
    string_types = tuple(getattr(T, n) for n in ("StringType", "VarcharType", "CharType") if hasattr(T, n))
    if isinstance(data_type, string_types):
        return "string"
    datetime_types = tuple(getattr(T, n) for n in ("DateType", "TimestampType", "TimestampNTZType") if hasattr(T, n))
    if isinstance(data_type, datetime_types):
        return "datetime"
    interval_types = tuple(getattr(T, n) for n in ("DayTimeIntervalType", "YearMonthIntervalType") if hasattr(T, n))
    if interval_types and isinstance(data_type, interval_types):
        return "timedelta"
    return "other"


def spark_dataframe_types() -> tuple[type, ...]:
    """The PySpark DataFrame classes already imported (classic and Spark Connect); never imports."""
    found: list[type] = []
    sql = sys.modules.get("pyspark.sql")
    if sql is not None and hasattr(sql, "DataFrame"):
        found.append(sql.DataFrame)
    connect = sys.modules.get("pyspark.sql.connect.dataframe")
    if connect is not None and hasattr(connect, "DataFrame"):
        found.append(connect.DataFrame)
    return tuple(found)


def duckdb_relation_type() -> type | None:
    """DuckDB's relation class when the user already imported duckdb; never imports."""
    duckdb = sys.modules.get("duckdb")
    return getattr(duckdb, "DuckDBPyRelation", None) if duckdb is not None else None


# --- the shared part ------------------------------------------------------------------------


@dataclass(frozen=True)
class ScanColumn:
    """One column of a scanned frame as a scan reads it."""

    name: str
    dtype: str
    kind: str
    #: numpy would see an integer dtype (integers and booleans).
    integer: bool
    #: An integer type some of whose values may change when read as float64.
    wide: bool
    #: A floating-point type: NaN counts as missing.
    floating: bool

    @property
    def numeric(self) -> bool:
        """Read as numbers (numeric and bool columns)."""
        return self.kind in ("numeric", "bool")


@dataclass
class RankRange:
    """What the order statistics of one column's values (or of one bucket's) start from."""

    column: ScanColumn
    #: Ranks wanted (0-based among the values in range), ascending and distinct.
    ranks: list[int]
    #: Values in range (present, and inside ``within`` when set).
    count: int
    #: Least and greatest finite value in range (None: no finite value).
    lo: float | None
    hi: float | None
    #: How many of the values are −Inf and +Inf.
    below: int = 0
    above: int = 0
    #: Only the values v with within[0] <= v <= within[1] (a bucket's values); None: all.
    within: tuple[float, float] | None = None

    def bucket_scale(self, buckets: int) -> tuple[float, float, float] | None:
        """(shift, width, factor): a finite v's bucket is floor((v·factor − shift) / width · buckets),
        clamped to [0, buckets − 1]; None when every finite value is the same."""
        if self.lo is None or self.hi is None or self.lo == self.hi:
            return None
        width = self.hi - self.lo
        if math.isfinite(width):
            return self.lo, width, 1.0
        # The range overflows a double: halve everything (exact for normal doubles, and any
        # rounding keeps the order).
        return self.lo * 0.5, self.hi * 0.5 - self.lo * 0.5, 0.5


@dataclass
class Bucket:
    """One non-empty bucket of a RankRange: its index (−1: −Inf, buckets: +Inf), count and extremes."""

    index: int
    count: int
    lo: float
    hi: float


@dataclass
class ColumnAggregate:
    """What one aggregate pass gives per column."""

    missing: int
    count: int
    minimum: float | None
    maximum: float | None
    has_infinite: bool
    rounded: bool


class ScanEngine:
    """One scanned frame behind one small interface; a subclass per engine.

    The primitives (``_aggregate`` … ``_sample``) each run one query or job; the public
    methods build the contract's replies from them.
    """

    #: 'duckdb' or 'spark'.
    name = ""
    #: The order statistics' limits (module defaults; tests lower them on one engine).
    rank_buckets = RANK_BUCKETS
    rank_fetch_limit = RANK_FETCH_LIMIT
    rank_depth = RANK_DEPTH

    def __init__(self, frame: Any, frame_name: str) -> None:
        self.frame = frame
        self.frame_name = frame_name
        self._cancelled = threading.Event()
        # While a step runs (_stepping), and when it has returned (_stepped): cancel() repeats
        # the interrupt between the two.
        self._stepping = threading.Event()
        self._stepped = threading.Event()
        self._watch_lock = threading.Lock()
        self._watcher: threading.Thread | None = None
        self._columns = self._read_columns()
        #: How often each way of finding an order statistic ran (tests read it).
        self.rank_routes: Counter[str] = Counter()

    # -- subclass primitives --
    def version(self) -> str:  # pragma: no cover - abstract
        raise NotImplementedError

    def _read_columns(self) -> list[ScanColumn]:  # pragma: no cover - abstract
        raise NotImplementedError

    def row_count(self) -> int:  # pragma: no cover - abstract
        raise NotImplementedError

    def _aggregate(self, columns: Sequence[ScanColumn]) -> list[ColumnAggregate]:  # pragma: no cover
        raise NotImplementedError

    def _levels(self, column: ScanColumn, cap: int) -> int:  # pragma: no cover
        """``min(distinct present values, cap)`` of one column (unused where _levels_of is overridden)."""
        raise NotImplementedError

    def _levels_of(self, columns: Sequence[ScanColumn], cap: int) -> list[int]:
        """``min(distinct present values, cap)`` of each column (an engine may share one scan)."""
        return [self._levels(column, cap) for column in columns]

    def _first(self, column: ScanColumn, what: str) -> tuple[int, Any]:  # pragma: no cover
        """Row position and value of the first missing ('missing') or ±Inf ('infinite') value."""
        raise NotImplementedError

    def _values(self, column: ScanColumn) -> np.ndarray:  # pragma: no cover
        """The non-missing values as float64 in row order."""
        raise NotImplementedError

    def _rank_ranges(self, columns: Sequence[ScanColumn]) -> list[tuple[int, Any, Any, int, int]]:  # pragma: no cover
        """Per column in one scan: (present count, finite min, finite max, #−Inf, #+Inf)."""
        raise NotImplementedError

    def _bucket_counts(self, ranges: Sequence[RankRange], buckets: int) -> list[list[Bucket]]:  # pragma: no cover
        """Every range's non-empty buckets in one scan (any order)."""
        raise NotImplementedError

    def _bucket_values(
        self, ranges: Sequence[RankRange], buckets: int, chosen: Sequence[Sequence[int]]
    ) -> list[dict[int, np.ndarray]]:  # pragma: no cover
        """The values of each range's chosen buckets in one scan, by bucket (any order)."""
        raise NotImplementedError

    def _sorted_ranks(self, spec: RankRange) -> dict[int, float]:  # pragma: no cover
        """The wanted ranks by sorting the range's values in the engine (the slow exact way)."""
        raise NotImplementedError

    def _heavy_ranks(self, specs: Sequence[RankRange], depth: int) -> list[dict[int, float]]:
        """The ranks of buckets too heavy to fetch: bucketed again inside each, down to
        ``rank_depth`` levels, then sorted in the engine."""
        if depth >= self.rank_depth:
            self.rank_routes["sorted at depth"] += len(specs)
            return [self._sorted_ranks(spec) for spec in specs]
        return self._ranked(specs, depth + 1)

    def _distinct(self, column: ScanColumn) -> list[tuple[Any, int]]:  # pragma: no cover
        raise NotImplementedError

    def _group(self, keys: Sequence[tuple[ScanColumn, list[float] | None]], limit: int) -> tuple[pa.Table, int]:  # pragma: no cover
        """The grouped table (at most ``limit + 1`` rows) and the input row count."""
        raise NotImplementedError

    def _count_groups(self, keys: Sequence[tuple[ScanColumn, list[float] | None]]) -> int:  # pragma: no cover
        raise NotImplementedError

    def _sample(self, columns: Sequence[ScanColumn], row_cap: int, seed: int) -> tuple[pa.Table, int]:  # pragma: no cover
        """A seeded sample of ``min(row_cap, rows)`` rows in row order, and the row count."""
        raise NotImplementedError

    def _interrupt(self) -> None:  # pragma: no cover
        raise NotImplementedError

    def _engine_errors(self) -> tuple[type, ...]:  # pragma: no cover
        raise NotImplementedError

    # -- order statistics --
    def order_statistics(self, wanted: Sequence[tuple[ScanColumn, Sequence[int]]]) -> list[dict[int, float]]:
        """Exact order statistics (rank → value, ranks 0-based among the present values) of several
        columns, sharing scans: one for the ranges, one for every column's bucket counts, one per
        batch of fetched buckets. A rank past the last value is left out."""
        columns = [column for column, _ranks in wanted]
        ranges = self._rank_ranges(columns)
        specs = [
            RankRange(column, sorted(set(int(r) for r in ranks)), int(n), lo, hi, int(below), int(above))
            for (column, ranks), (n, lo, hi, below, above) in zip(wanted, ranges)
        ]
        self._check()
        return self._ranked(specs, 0)

    def _ranked(self, specs: Sequence[RankRange], depth: int) -> list[dict[int, float]]:
        found: list[dict[int, float]] = [{} for _ in specs]
        scanned = []
        for i, spec in enumerate(specs):
            spec.ranks = [r for r in spec.ranks if r < spec.count]
            if not spec.ranks:
                continue
            if spec.bucket_scale(self.rank_buckets) is None:
                # Every finite value is the same: the ranks follow from the counts of ±Inf.
                self.rank_routes["one value"] += 1
                for rank in spec.ranks:
                    found[i][rank] = (
                        -math.inf if rank < spec.below else math.inf if rank >= spec.count - spec.above else float(spec.lo)
                    )
            else:
                scanned.append(i)
        if not scanned:
            return found
        counted = self._bucket_counts([specs[i] for i in scanned], self.rank_buckets)
        self._check()
        # (spec index, bucket, values before it, ranks in it) of the buckets to fetch
        fetch: list[tuple[int, Bucket, int, list[int]]] = []
        unsorted: list[int] = []
        for i, buckets in zip(scanned, counted):
            spec = specs[i]
            buckets = sorted(buckets, key=lambda b: b.index)
            # The ranks follow from the buckets only if the buckets hold every value and are in
            # order (each bucket's values all below the next bucket's): check, never assume.
            ordered = all(a.hi < b.lo for a, b in zip(buckets, buckets[1:])) and all(b.lo <= b.hi for b in buckets)
            if sum(b.count for b in buckets) != spec.count or not ordered:
                unsorted.append(i)
                continue
            ranks = iter(spec.ranks)
            rank = next(ranks, None)
            before = 0
            for bucket in buckets:
                inside: list[int] = []
                while rank is not None and rank < before + bucket.count:
                    local = rank - before
                    if bucket.lo == bucket.hi or local == 0:
                        self.rank_routes["bucket edge"] += 1
                        found[i][rank] = float(bucket.lo)
                    elif local == bucket.count - 1:
                        self.rank_routes["bucket edge"] += 1
                        found[i][rank] = float(bucket.hi)
                    else:
                        inside.append(rank)
                    rank = next(ranks, None)
                if inside:
                    fetch.append((i, bucket, before, inside))
                before += bucket.count
        heavy = [entry for entry in fetch if entry[1].count > self.rank_fetch_limit]
        light = sorted((entry for entry in fetch if entry[1].count <= self.rank_fetch_limit), key=lambda e: e[1].count)
        batches: list[list[tuple[int, Bucket, int, list[int]]]] = []
        total = self.rank_fetch_limit + 1
        for entry in light:
            if total + entry[1].count > self.rank_fetch_limit:
                batches.append([])
                total = 0
            batches[-1].append(entry)
            total += entry[1].count
        for batch in batches:
            order = sorted({i for i, *_rest in batch})
            chosen = [[bucket.index for j, bucket, *_rest in batch if j == i] for i in order]
            values = self._bucket_values([specs[i] for i in order], self.rank_buckets, chosen)
            self._check()
            by_spec = dict(zip(order, values))
            for i, bucket, before, inside in batch:
                got = np.sort(np.asarray(by_spec[i].get(bucket.index, ()), dtype=np.float64))
                # The fetched values must be the counted ones: same count, same extremes.
                if got.size != bucket.count or got[0] != bucket.lo or got[-1] != bucket.hi:
                    unsorted.append(i)
                    continue
                self.rank_routes["fetched"] += 1
                for rank in inside:
                    found[i][rank] = float(got[rank - before])
        if heavy:
            self.rank_routes["heavy"] += len(heavy)
            inner = [
                RankRange(specs[i].column, [r - before for r in inside], bucket.count, bucket.lo, bucket.hi,
                          within=(bucket.lo, bucket.hi))
                for i, bucket, before, inside in heavy
            ]
            for (i, bucket, before, inside), got in zip(heavy, self._heavy_ranks(inner, depth)):
                for rank in inside:
                    if rank - before not in got:
                        raise BridgeError(
                            f"Column {specs[i].column.name!r} changed while it was scanned.", column=specs[i].column.name
                        )
                    found[i][rank] = got[rank - before]
        for i in sorted(set(unsorted)):
            self.rank_routes["sorted"] += 1
            found[i] = self._sorted_ranks(specs[i])
        return found

    # -- cancelling --
    def cancel(self) -> None:
        """Stop the running query or job; the scan then raises ScanCancelled.

        Both engines stop only work that has already started (Spark's ``cancelJobGroup`` cancels
        the group's active jobs, DuckDB's ``interrupt()`` the running query): a cancel that lands
        while a step is between its check and its engine's job would stop nothing and the job
        would run to its end. So after a cancel the interrupt is repeated until the step returns.
        """
        self._cancelled.set()
        self._interrupt()
        with self._watch_lock:
            if self._watcher is None:
                self._watcher = threading.Thread(
                    target=self._interrupt_until_stepped, name=f"polyadic-cancel-{self.frame_name}", daemon=True
                )
                self._watcher.start()

    def _interrupt_until_stepped(self) -> None:
        # A step sets _stepping before it checks the cancelled flag (run below), so either the
        # step sees the flag and never starts, or this loop sees the step and interrupts it.
        while self._stepping.is_set():
            if self._stepped.wait(INTERRUPT_REPEAT_SECONDS):
                break
            try:
                self._interrupt()
            except Exception:  # noqa: BLE001 - an engine that is gone has nothing left to stop
                _log.debug("polyadic: repeating the interrupt of %s failed", self.frame_name, exc_info=True)
                return

    @property
    def cancelled(self) -> bool:
        """Whether :meth:`cancel` was called."""
        return self._cancelled.is_set()

    def _check(self) -> None:
        if self._cancelled.is_set():
            raise ScanCancelled()

    def run(self, step: Callable[[], Any]) -> Any:
        """Run one step, turning the engine's failures into EngineFailure or ScanCancelled."""
        self._stepped.clear()
        self._stepping.set()
        try:
            self._check()
            try:
                result = step()
            except (ScanCancelled, BridgeError):
                raise
            except self._engine_errors() as error:
                if self._cancelled.is_set():
                    raise ScanCancelled() from None
                raise EngineFailure(self.name, engine_message(error)) from None
        finally:
            self._stepping.clear()
            self._stepped.set()
        self._check()
        return result

    # -- columns --
    @property
    def columns(self) -> list[ScanColumn]:
        """Every column of the frame."""
        return list(self._columns)

    def listing_columns(self) -> list[dict[str, str]]:
        """The columns as the listing shows them."""
        return [{"name": c.name, "dtype": c.dtype, "kind": c.kind} for c in self._columns]

    def engine_info(self) -> dict[str, str]:
        """``{name, version}`` of the engine."""
        return {"name": self.name, "version": self.version()}

    def column(self, name: Any, scanned: bool = True) -> ScanColumn:
        """The column named ``name``; with ``scanned``, refuse kinds a scan cannot read."""
        if not isinstance(name, str):
            raise BridgeError("A column must be named by a string.", option="columns")
        matches = [c for c in self._columns if c.name == name]
        if not matches:
            raise BridgeError(f"The frame {self.frame_name!r} has no column {name!r}.", column=name)
        if len(matches) > 1:
            raise BridgeError(
                f"The frame {self.frame_name!r} has {len(matches)} columns named {name!r}; rename them "
                "to tell them apart.",
                column=name,
            )
        column = matches[0]
        if scanned and column.kind not in SCAN_KINDS:
            hint = (
                " (for example to epoch seconds)" if column.kind in ("datetime", "timedelta") else ""
            )
            raise BridgeError(
                f"Column {name!r} has type {column.dtype} ({column.kind}), which a scan cannot read; "
                f"cast it to numbers or strings in {self.label()}{hint} and list the frame again.",
                column=name,
                dtype=column.dtype,
                kind=column.kind,
            )
        return column

    def label(self) -> str:
        """The engine's name as people write it."""
        return {"duckdb": "DuckDB", "spark": "Spark"}.get(self.name, self.name)

    # -- steps --
    def facts(self, names: Sequence[str]) -> dict[str, Any]:
        """The ``scan_facts`` reply body (without type and request_id)."""
        columns = _distinct_columns(self, names)
        rows = self.run(self.row_count)
        aggregates = self.run(lambda: self._aggregate(columns))
        counted = [column for column, agg in zip(columns, aggregates) if agg.count]
        found = self.run(lambda: self._levels_of(counted, AUTO_MAX_LEVELS + 1)) if counted else []
        levels_of = dict(zip((column.name for column in counted), found))
        out = []
        for column, agg in zip(columns, aggregates):
            first_missing = self.run(lambda: self._first(column, "missing"))[0] if agg.missing else -1
            infinite = None
            if column.numeric and agg.has_infinite:
                row, value = self.run(lambda: self._first(column, "infinite"))
                infinite = {"row": int(row), "value": scan_double(value)}
            levels = levels_of.get(column.name, 0)
            out.append(
                {
                    "name": column.name,
                    "dtype": column.dtype,
                    "kind": column.kind,
                    "missing_count": int(agg.missing),
                    "first_missing_row": int(first_missing),
                    "count": int(agg.count),
                    "levels": int(levels),
                    "integer": bool(column.integer) if column.numeric else None,
                    "rounded": bool(agg.rounded) if column.numeric else False,
                    "infinite": infinite,
                    "min": scan_double(agg.minimum) if column.numeric and agg.minimum is not None else None,
                    "max": scan_double(agg.maximum) if column.numeric and agg.maximum is not None else None,
                }
            )
        return {"rows": int(rows), "engine": self.engine_info(), "columns": out}

    def details(self, requests: Any) -> dict[str, Any]:
        """The ``scan_details`` reply body."""
        if not isinstance(requests, list) or not requests:
            raise BridgeError("'columns' must be a non-empty list of detail requests.", option="columns")
        checked: list[tuple[ScanColumn, list[int], dict]] = []
        for request in requests:
            if not isinstance(request, dict):
                raise BridgeError("Each detail request must be a JSON object.", option="columns")
            column = self.column(request.get("name"))
            ranks = request.get("ranks", [])
            if not isinstance(ranks, list) or not all(
                isinstance(r, int) and not isinstance(r, bool) and r >= 0 for r in ranks
            ):
                raise BridgeError(
                    f"'ranks' of column {column.name!r} must be a list of whole numbers from 0.",
                    column=column.name,
                    option="ranks",
                )
            if ranks and not column.numeric:
                raise BridgeError(
                    f"Column {column.name!r} holds text: it has no order statistics.", column=column.name
                )
            checked.append((column, ranks, request))
        # Every column's order statistics together, so that the columns share their scans.
        ranked = [(column, ranks) for column, ranks, _request in checked if ranks]
        found_all = iter(self.run(lambda: self.order_statistics(ranked)) if ranked else [])
        out = []
        for column, ranks, request in checked:
            order: list[ScanDouble] = []
            if ranks:
                found = next(found_all)
                missing = [r for r in ranks if r not in found]
                if missing:
                    raise BridgeError(
                        f"Rank {missing[0]} is past the last non-missing value of column {column.name!r}.",
                        column=column.name,
                        option="ranks",
                    )
                order = [scan_double(found[r]) for r in ranks]
            want_std = request.get("std") is True
            want_skew = request.get("skewness") is True
            std = skewness = None
            if want_std and column.numeric:
                values = self.run(lambda: self._values(column))
                std, skewness = numpy_moments(values, want_skew)
            distinct = None
            if request.get("distinct") is True:
                pairs = self.run(lambda: self._distinct(column))
                distinct = distinct_reply(column, pairs)
            out.append(
                {
                    "name": column.name,
                    "order_statistics": order,
                    "std": std,
                    "skewness": skewness,
                    "distinct": distinct,
                }
            )
        return {"columns": out}

    def group(self, keys: Any, max_distinct_rows: Any = None) -> tuple[pa.Table, int]:
        """The grouped table in the contract's Arrow layout, and the input row count."""
        limit = DEFAULT_MAX_DISTINCT_ROWS if max_distinct_rows is None else max_distinct_rows
        if isinstance(limit, bool) or not isinstance(limit, int) or limit < 1:
            raise BridgeError(
                f"'max_distinct_rows' must be a whole number of at least 1, got {limit!r}.",
                option="max_distinct_rows",
            )
        plan = group_plan(self, keys)
        table, rows = self.run(lambda: self._group(plan, limit))
        if table.num_rows > limit:
            count = self.run(lambda: self._count_groups(plan))
            raise BridgeError(
                f"The binned columns of {self.frame_name!r} have {count} distinct rows, more than the "
                f"limit of {limit}; choose fewer columns or fewer bins.",
                limit="distinct_rows",
                count=int(count),
                max_distinct_rows=limit,
            )
        return conform_group_table(table, plan), rows

    def sample(self, names: Sequence[str] | None, row_cap: int, seed: int) -> tuple[pa.Table, int]:
        """The preview sample of the named columns (every column when None) and the row count."""
        if names is None:
            columns = [self.column(c.name, scanned=False) for c in self._columns]
        else:
            columns = [self.column(n, scanned=False) for n in _checked_names(names)]
        return self.run(lambda: self._sample(columns, row_cap, seed))


def _split_by_key(table: pa.Table, ranges: int, buckets: int) -> list[dict[int, np.ndarray]]:
    """Fetched (k, v) rows, k = range · (buckets + 2) + bucket + 1, as each range's values by bucket."""
    keys = table.column(0).to_numpy().astype(np.int64)
    values = table.column(1).to_numpy().astype(np.float64)
    order = np.argsort(keys, kind="stable")
    keys, values = keys[order], values[order]
    out: list[dict[int, np.ndarray]] = [{} for _ in range(ranges)]
    unique, starts = np.unique(keys, return_index=True)
    for key, a, b in zip(unique, starts, list(starts[1:]) + [keys.size]):
        i, bucket = divmod(int(key), buckets + 2)
        out[i][bucket - 1] = values[a:b]
    return out


def _bucket_keyer(
    scales: Sequence[tuple[float, float, float] | None], buckets: int
) -> Callable[[Any], tuple[np.ndarray, np.ndarray]]:
    """For Spark's Python workers: a function from an Arrow batch of range values (column i: range
    i's values as doubles, null outside it) to the (key, value) pairs of the values in range, key =
    i · (buckets + 2) + bucket + 1 (bucket −1: −Inf, buckets: +Inf), a finite value's bucket as
    :meth:`RankRange.bucket_scale` says. Uses only numpy, so that it is pickled by value."""
    if any(scale is None for scale in scales):
        raise ValueError("every range to bucket needs two different finite values")
    scaled_by = [tuple(float(v) for v in scale) for scale in scales]  # type: ignore[union-attr]

    def keyed(batch: Any) -> tuple[np.ndarray, np.ndarray]:
        keys, values = [], []
        for i, (shift, width, factor) in enumerate(scaled_by):
            x = batch.column(i).to_numpy(zero_copy_only=False).astype(np.float64, copy=False)
            x = x[~np.isnan(x)]
            finite = np.isfinite(x)
            bucket = np.empty(x.size, dtype=np.int64)
            scaled = np.floor((x[finite] * factor - shift) / width * float(buckets))
            bucket[finite] = np.clip(scaled, 0, buckets - 1).astype(np.int64)
            bucket[x == -np.inf] = -1
            bucket[x == np.inf] = buckets
            keys.append(bucket + (i * (buckets + 2) + 1))
            values.append(x)
        if not keys:
            return np.zeros(0, np.int64), np.zeros(0, np.float64)
        return np.concatenate(keys), np.concatenate(values)

    return keyed


def sample_indices(rows: int, row_cap: int, seed: int) -> np.ndarray | None:
    """Sorted row positions of a seeded random sample of ``row_cap`` rows, or None if all fit."""
    if rows <= row_cap:
        return None
    rng = np.random.default_rng(seed)
    return np.sort(rng.choice(rows, size=row_cap, replace=False))


def _checked_names(names: Any) -> list[str]:
    if isinstance(names, (str, bytes)) or not isinstance(names, list) or not all(isinstance(n, str) for n in names):
        raise BridgeError("'columns' must be a list of column names.", option="columns")
    if not names:
        raise BridgeError("Choose at least one column.", option="columns")
    seen: set[str] = set()
    for name in names:
        if name in seen:
            raise BridgeError(f"Column {name!r} is requested twice.", column=name)
        seen.add(name)
    return list(names)


def _distinct_columns(engine: ScanEngine, names: Any) -> list[ScanColumn]:
    return [engine.column(name) for name in _checked_names(names)]


def numpy_moments(values: np.ndarray, skewness: bool) -> tuple[float | None, float | None]:
    """``numpy.std(x)`` and ``numpy.mean(((x - x.mean()) / s) ** 3)`` (None when s == 0)."""
    x = np.asarray(values, dtype=np.float64)
    if x.size == 0:
        return None, None
    s = float(np.std(x))
    if not skewness or s == 0 or not math.isfinite(s):
        return s if math.isfinite(s) else None, None
    return s, float(np.mean(((x - x.mean()) / s) ** 3))


def distinct_reply(column: ScanColumn, pairs: Iterable[tuple[Any, int]]) -> dict[str, list[Any]]:
    """Distinct values ascending (numbers, −0 as 0) or by code point (text), with their counts."""
    merged: dict[Any, int] = {}
    for value, count in pairs:
        key = float(value) + 0.0 if column.numeric else str(value)
        merged[key] = merged.get(key, 0) + int(count)
    ordered = sorted(merged)  # floats numerically; str by code point
    return {
        "values": [scan_double(v) if column.numeric else v for v in ordered],
        "counts": [merged[v] for v in ordered],
    }


def check_edges(column: ScanColumn, edges: Any) -> list[float]:
    """Validated bin edges: at least two, numeric, ascending, no NaN."""
    if not isinstance(edges, list) or len(edges) < 2:
        raise BridgeError(f"The edges of column {column.name!r} must be a list of at least 2 numbers.", column=column.name)
    out: list[float] = []
    for edge in edges:
        if edge in ("Infinity", "-Infinity"):
            edge = math.inf if edge == "Infinity" else -math.inf
        if isinstance(edge, bool) or not isinstance(edge, (int, float)) or math.isnan(edge):
            raise BridgeError(f"The edges of column {column.name!r} must be numbers.", column=column.name)
        out.append(float(edge))
    if any(b < a for a, b in zip(out, out[1:])):
        raise BridgeError(f"The edges of column {column.name!r} must be ascending.", column=column.name)
    return out


def group_plan(engine: ScanEngine, keys: Any) -> list[tuple[ScanColumn, list[float] | None]]:
    """The validated keys of a group request: each column with its edges (None: its values)."""
    if not isinstance(keys, list) or not keys:
        raise BridgeError("'columns' must be a non-empty list of group keys.", option="columns")
    plan = []
    seen: set[str] = set()
    for key in keys:
        if not isinstance(key, dict) or "edges" not in key:
            raise BridgeError("Each group key must be an object with 'name' and 'edges'.", option="columns")
        column = engine.column(key.get("name"))
        if column.name in seen:
            raise BridgeError(f"Column {column.name!r} is requested twice.", column=column.name)
        seen.add(column.name)
        edges = key["edges"]
        if edges is not None:
            if not column.numeric:
                raise BridgeError(f"Column {column.name!r} holds text: it cannot be cut at edges.", column=column.name)
            edges = check_edges(column, edges)
        plan.append((column, edges))
    return plan


def group_schema(plan: Sequence[tuple[ScanColumn, list[float] | None]]) -> pa.Schema:
    """The Arrow layout of a grouped table: k0, k1, … then weight."""
    fields = []
    for index, (column, edges) in enumerate(plan):
        kind = pa.int32() if edges is not None else (pa.float64() if column.numeric else pa.string())
        fields.append(pa.field(f"k{index}", kind, nullable=True))
    fields.append(pa.field("weight", pa.int64(), nullable=False))
    return pa.schema(fields)


def conform_group_table(table: pa.Table, plan: Sequence[tuple[ScanColumn, list[float] | None]]) -> pa.Table:
    """The engine's grouped table cast to the contract's exact types and names."""
    schema = group_schema(plan)
    arrays = [table.column(i).cast(schema.field(i).type) for i in range(len(schema))]
    return pa.Table.from_arrays(arrays, schema=schema)


def engine_message(error: BaseException) -> str:
    """The engine's own message of a failure, at most ENGINE_MESSAGE_MAX characters."""
    text = str(error).strip() or type(error).__name__
    return text[:ENGINE_MESSAGE_MAX]


def first_line(text: str) -> str:
    """The line of an engine message a person should read first, on one line.

    When the message carries a Python traceback (a Python UDF that raised in a Spark worker:
    Spark's own first line then only says "An exception was thrown from the Python worker"),
    this is the Python exception's own line, e.g. ``ValueError: sensor 17 is out of range``;
    otherwise the first non-empty line.
    """
    raised = python_exception_line(text)
    if raised is not None:
        return raised
    for line in text.splitlines():
        if line.strip():
            return line.strip()
    return text.strip()


#: The line that opens a Python traceback.
_TRACEBACK_START = "Traceback (most recent call last):"
#: A Python exception's line: a dotted class name, then ': ' and the message (or nothing).
_EXCEPTION_LINE = re.compile(r"^[A-Za-z_][\w.]*(?::\s.*)?$")


def python_exception_line(text: str) -> str | None:
    """The exception line of the last Python traceback in ``text``, or None when it holds none.

    Python prints a traceback as its opening line, indented frames and source lines, then the
    exception unindented (Python's ``traceback`` module); with chained exceptions the last
    traceback is the one raised. A Spark error may carry a JVM stack trace after it.
    """
    lines = text.splitlines()
    starts = [i for i, line in enumerate(lines) if line.strip() == _TRACEBACK_START]
    if not starts:
        return None
    for line in lines[starts[-1] + 1 :]:
        if not line.strip() or line[:1].isspace():
            continue
        candidate = line.strip()
        return candidate if _EXCEPTION_LINE.match(candidate) else None
    return None


# --- DuckDB ----------------------------------------------------------------------------------


class DuckDBScan(ScanEngine):
    """Scans of a ``duckdb.DuckDBPyRelation`` on its own connection.

    Queries run through the relation (``query``, ``select``, ``aggregate``), so they see the
    relation's connection and tables. For cancelling, the connection is found among
    ``connections`` (DuckDB's default one and those in the user's namespace) at the first query:
    each is given a probe variable that the relation's connection then reads back.
    """

    name = "duckdb"
    _VIEW = "polyadic_scanned"

    def __init__(self, frame: Any, frame_name: str, connections: Callable[[], Iterable[Any]] | None = None) -> None:
        super().__init__(frame, frame_name)
        self._connections = connections or (lambda: ())
        self._connection: Any = None
        self._located = False

    def version(self) -> str:
        import duckdb

        return str(duckdb.__version__)

    def _engine_errors(self) -> tuple[type, ...]:
        import duckdb

        return (duckdb.Error,)

    def _read_columns(self) -> list[ScanColumn]:
        columns = []
        for name, dtype in zip(self.frame.columns, self.frame.types):
            type_name = str(dtype)
            upper = type_name.upper()
            kind = duckdb_column_kind(type_name)
            columns.append(
                ScanColumn(
                    name=name,
                    dtype=type_name,
                    kind=kind,
                    integer=kind == "bool" or upper in _DUCKDB_INTEGERS,
                    wide=upper in _DUCKDB_WIDE,
                    floating=upper in ("FLOAT", "DOUBLE"),
                )
            )
        return columns

    # The relation as a view named _VIEW inside one SQL text; only quoted identifiers and our
    # own fixed words are ever written into the text.
    def _sql(self, text: str) -> Any:
        self._locate()
        # A cancel that came while the connection was being found had nothing to interrupt.
        self._check()
        return self.frame.query(self._VIEW, text)

    def _locate(self) -> None:
        if self._located:
            return
        self._located = True
        token = uuid.uuid4().hex
        candidates = []
        seen: set[int] = set()
        for connection in self._connections():
            if id(connection) in seen:
                continue
            seen.add(id(connection))
            candidates.append(connection)
        for index, connection in enumerate(candidates):
            try:
                connection.execute(f"SET VARIABLE polyadic_probe = '{token}-{index}'")
            except Exception:  # noqa: BLE001 - a closed connection is simply not it
                continue
        try:
            found = self.frame.query(self._VIEW, "SELECT getvariable('polyadic_probe')").fetchone()[0]
        except Exception:  # noqa: BLE001 - then cancel cannot interrupt; the scan still works
            found = None
        for index, connection in enumerate(candidates):
            if found == f"{token}-{index}":
                self._connection = connection
            try:
                connection.execute("RESET VARIABLE polyadic_probe")
            except Exception:  # noqa: BLE001
                pass

    def _interrupt(self) -> None:
        if self._connection is not None:
            self._connection.interrupt()

    def _missing(self, column: ScanColumn) -> str:
        ref = quote_duckdb(column.name)
        return f"({ref} IS NULL OR isnan({ref}))" if column.floating else f"({ref} IS NULL)"

    def _double(self, column: ScanColumn) -> str:
        return f"CAST({quote_duckdb(column.name)} AS DOUBLE)"

    def row_count(self) -> int:
        return int(self._sql(f"SELECT count(*) FROM {self._VIEW}").fetchone()[0])

    def _aggregate(self, columns: Sequence[ScanColumn]) -> list[ColumnAggregate]:
        parts = []
        for column in columns:
            miss = self._missing(column)
            parts.append(f"count(*) FILTER (WHERE {miss})")
            parts.append(f"count(*) FILTER (WHERE NOT {miss})")
            if column.numeric:
                value = self._double(column)
                parts.append(f"min({value}) FILTER (WHERE NOT {miss})")
                parts.append(f"max({value}) FILTER (WHERE NOT {miss})")
                parts.append(f"coalesce(bool_or(isinf({value})) FILTER (WHERE NOT {miss}), false)")
                if column.wide:
                    ref = quote_duckdb(column.name)
                    parts.append(
                        f"coalesce(bool_or(CAST({value} AS HUGEINT) <> CAST({ref} AS HUGEINT)), false)"
                        if column.dtype.upper() != "UHUGEINT"
                        else f"coalesce(bool_or(CAST({value} AS UHUGEINT) <> {ref}), false)"
                    )
                else:
                    parts.append("false")
            else:
                parts.extend(["NULL", "NULL", "false", "false"])
        row = self._sql(f"SELECT {', '.join(parts)} FROM {self._VIEW}").fetchone()
        out = []
        for i in range(len(columns)):
            missing, count, lo, hi, inf, rounded = row[6 * i : 6 * i + 6]
            out.append(ColumnAggregate(int(missing), int(count), lo, hi, bool(inf), bool(rounded)))
        return out

    def _value_expr(self, column: ScanColumn) -> str:
        return self._double(column) + " + 0.0" if column.numeric else f"CAST({quote_duckdb(column.name)} AS VARCHAR)"

    def _levels(self, column: ScanColumn, cap: int) -> int:
        sql = (
            f"SELECT count(*) FROM (SELECT DISTINCT {self._value_expr(column)} FROM {self._VIEW} "
            f"WHERE NOT {self._missing(column)} LIMIT {int(cap)})"
        )
        return int(self._sql(sql).fetchone()[0])

    def _first(self, column: ScanColumn, what: str) -> tuple[int, Any]:
        # Row positions are the order the relation yields its rows: read in batches until found.
        flag = self._missing(column) if what == "missing" else f"coalesce(isinf({self._double(column)}), false)"
        value = self._double(column) if column.numeric else "NULL"
        reader = self._sql(f"SELECT {flag} AS f, {value} AS v FROM {self._VIEW}").to_arrow_reader(1 << 16)
        position = 0
        for batch in reader:
            self._check()
            flags = batch.column(0)
            hit = pc.index(flags, True).as_py()
            if hit >= 0:
                return position + hit, batch.column(1)[hit].as_py()
            position += batch.num_rows
        raise BridgeError(f"Column {column.name!r} changed while it was scanned.", column=column.name)

    def _values(self, column: ScanColumn) -> np.ndarray:
        sql = f"SELECT {self._double(column)} FROM {self._VIEW} WHERE NOT {self._missing(column)}"
        table = self._sql(sql).to_arrow_table()
        return table.column(0).to_numpy()

    def _rank_ranges(self, columns: Sequence[ScanColumn]) -> list[tuple[int, Any, Any, int, int]]:
        parts = []
        for column in columns:
            miss, value = self._missing(column), self._double(column)
            finite = f"NOT {miss} AND NOT isinf({value})"
            parts.append(f"count(*) FILTER (WHERE NOT {miss})")
            parts.append(f"min({value}) FILTER (WHERE {finite})")
            parts.append(f"max({value}) FILTER (WHERE {finite})")
            parts.append(f"count(*) FILTER (WHERE NOT {miss} AND isinf({value}) AND {value} < 0)")
            parts.append(f"count(*) FILTER (WHERE NOT {miss} AND isinf({value}) AND {value} > 0)")
        row = self._sql(f"SELECT {', '.join(parts)} FROM {self._VIEW}").fetchone()
        return [tuple(row[5 * i : 5 * i + 5]) for i in range(len(columns))]

    def _ranked_value(self, spec: RankRange) -> Any:
        """The range's values as doubles, NULL outside it (an expression, constants as constants)."""
        from duckdb import CaseExpression, ConstantExpression, SQLExpression

        x = SQLExpression(self._double(spec.column))
        outside = SQLExpression(self._missing(spec.column))
        if spec.within is not None:
            outside = outside | (x < ConstantExpression(spec.within[0])) | (x > ConstantExpression(spec.within[1]))
        return CaseExpression(outside, ConstantExpression(None)).otherwise(x)

    def _bucket_key(self, spec: RankRange, buckets: int, index: int) -> Any:
        """index · (buckets + 2) + bucket + 1 of each value in range (bucket −1: −Inf, buckets: +Inf)."""
        import duckdb
        from duckdb import CaseExpression, ConstantExpression, FunctionExpression

        x = self._ranked_value(spec)
        shift, width, factor = spec.bucket_scale(buckets)  # type: ignore[misc]
        scaled = (x * ConstantExpression(factor) - ConstantExpression(shift)) / ConstantExpression(width)
        raw = FunctionExpression("floor", scaled * ConstantExpression(float(buckets)))
        clamped = FunctionExpression(
            "least", FunctionExpression("greatest", raw, ConstantExpression(0.0)), ConstantExpression(float(buckets - 1))
        )
        # greatest/least skip NULLs: a value out of range must stay NULL, so test it first.
        bucket = (
            CaseExpression(x.isnull(), ConstantExpression(None))
            .when(FunctionExpression("isinf", x) & (x < ConstantExpression(0.0)), ConstantExpression(-1.0))
            .when(FunctionExpression("isinf", x), ConstantExpression(float(buckets)))
            .otherwise(clamped)
        )
        key = bucket + ConstantExpression(float(index * (buckets + 2) + 1))
        return key.cast(duckdb.sqltype("BIGINT"))

    def _bucket_counts(self, ranges: Sequence[RankRange], buckets: int) -> list[list[Bucket]]:
        picked = []
        for i, spec in enumerate(ranges):
            picked += [self._bucket_key(spec, buckets, i).alias(f"k{i}"), self._ranked_value(spec).alias(f"v{i}")]
        self._locate()
        self._check()
        keys = ", ".join(f"k{i}" for i in range(len(ranges)))
        values = ", ".join(f"v{i}" for i in range(len(ranges)))
        rows = self.frame.select(*picked).query(
            "polyadic_bucketed",
            f"SELECT k, count(*), min(v), max(v) FROM (SELECT unnest([{keys}]) AS k, unnest([{values}]) AS v "
            "FROM polyadic_bucketed) WHERE k IS NOT NULL GROUP BY k",
        ).fetchall()
        out: list[list[Bucket]] = [[] for _ in ranges]
        for key, n, lo, hi in rows:
            i, b = divmod(int(key), buckets + 2)
            out[i].append(Bucket(b - 1, int(n), float(lo), float(hi)))
        return out

    def _bucket_values(self, ranges, buckets: int, chosen) -> list[dict[int, np.ndarray]]:
        from duckdb import CaseExpression, ColumnExpression, ConstantExpression

        picked = []
        for i, (spec, wanted) in enumerate(zip(ranges, chosen)):
            key = self._bucket_key(spec, buckets, i)
            codes = [ConstantExpression(i * (buckets + 2) + b + 1) for b in wanted]
            picked += [
                CaseExpression(key.isin(*codes), key).otherwise(ConstantExpression(None)).alias(f"k{i}"),
                self._ranked_value(spec).alias(f"v{i}"),
            ]
        any_key = ColumnExpression("k0").isnotnull()
        for i in range(1, len(ranges)):
            any_key = any_key | ColumnExpression(f"k{i}").isnotnull()
        self._locate()
        self._check()
        keys = ", ".join(f"k{i}" for i in range(len(ranges)))
        values = ", ".join(f"v{i}" for i in range(len(ranges)))
        table = (
            self.frame.select(*picked)
            .filter(any_key)
            .query(
                "polyadic_fetched",
                f"SELECT k, v FROM (SELECT unnest([{keys}]) AS k, unnest([{values}]) AS v FROM polyadic_fetched) "
                "WHERE k IS NOT NULL",
            )
            .to_arrow_table()
        )
        return _split_by_key(table, len(ranges), buckets)

    def _in_range(self, spec: RankRange) -> Any:
        from duckdb import ColumnExpression

        return self.frame.select(self._ranked_value(spec).alias("v")).filter(ColumnExpression("v").isnotnull())

    def _sorted_ranks(self, spec: RankRange) -> dict[int, float]:
        from duckdb import ColumnExpression, ConstantExpression

        self._locate()
        self._check()
        ranked = self._in_range(spec).query(
            "polyadic_values", "SELECT v, row_number() OVER (ORDER BY v) - 1 AS r FROM polyadic_values"
        )
        rows = ranked.filter(ColumnExpression("r").isin(*[ConstantExpression(r) for r in spec.ranks])).fetchall()
        return {int(r): float(v) for v, r in rows}

    def _heavy_ranks(self, specs: Sequence[RankRange], depth: int) -> list[dict[int, float]]:
        # DuckDB's quantile_disc over the bucket alone at (rank + ½) / n, each value checked by
        # counting (#{x < v} <= rank < #{x <= v}); a rank failing the check is read by sorting.
        from duckdb import ColumnExpression, ConstantExpression, FunctionExpression

        out = []
        for spec in specs:
            self._locate()
            self._check()
            values = self._in_range(spec)
            v = ColumnExpression("v")
            fractions = [(rank + 0.5) / spec.count for rank in spec.ranks]
            picked = values.aggregate([FunctionExpression("quantile_disc", v, ConstantExpression(fractions))]).fetchone()[0]
            checks = []
            for candidate in picked:
                checks.append(FunctionExpression("count_if", v < ConstantExpression(float(candidate))))
                checks.append(FunctionExpression("count_if", v <= ConstantExpression(float(candidate))))
            counts = values.aggregate(checks).fetchone()
            found: dict[int, float] = {}
            wrong = []
            for k, (rank, candidate) in enumerate(zip(spec.ranks, picked)):
                if counts[2 * k] <= rank < counts[2 * k + 1]:
                    self.rank_routes["engine quantile"] += 1
                    found[rank] = float(candidate)
                else:
                    wrong.append(rank)
            if wrong:
                self.rank_routes["sorted"] += 1
                found.update(self._sorted_ranks(RankRange(spec.column, wrong, spec.count, spec.lo, spec.hi, within=spec.within)))
            out.append(found)
        return out

    def _distinct(self, column: ScanColumn) -> list[tuple[Any, int]]:
        sql = (
            f"SELECT {self._value_expr(column)} AS v, count(*) FROM {self._VIEW} "
            f"WHERE NOT {self._missing(column)} GROUP BY v"
        )
        return [(v, int(n)) for v, n in self._sql(sql).fetchall()]

    def _keyed(self, plan: Sequence[tuple[ScanColumn, list[float] | None]]) -> Any:
        import duckdb
        from duckdb import CaseExpression, ConstantExpression, SQLExpression

        keys = []
        for index, (column, edges) in enumerate(plan):
            missing = SQLExpression(self._missing(column))
            if edges is None:
                value = SQLExpression(self._value_expr(column))
                key = CaseExpression(missing, ConstantExpression(None)).otherwise(value)
            else:
                x = SQLExpression(self._double(column))
                bins = len(edges) - 1
                # numpy.histogram's rule: the highest j with edges[j] <= x; x == edges[-1] in the
                # last bin; outside [edges[0], edges[-1]] → -1. Edges are double constants.
                key = CaseExpression(missing, ConstantExpression(None)).when(
                    (x < ConstantExpression(edges[0])) | (x > ConstantExpression(edges[-1])),
                    ConstantExpression(-1),
                )
                for j in range(bins - 1, 0, -1):
                    key = key.when(x >= ConstantExpression(edges[j]), ConstantExpression(j))
                key = key.otherwise(ConstantExpression(0))
                key = key.cast(duckdb.sqltype("INTEGER"))
            keys.append(key.alias(f"k{index}"))
        self._locate()
        self._check()
        return self.frame.select(*keys)

    def _group(self, plan, limit: int) -> tuple[pa.Table, int]:
        names = ", ".join(f"k{i}" for i in range(len(plan)))
        keyed = self._keyed(plan)
        grouped = keyed.aggregate(f"{names}, CAST(count(*) AS BIGINT) AS weight", names)
        table = grouped.limit(int(limit) + 1).to_arrow_table()
        rows = int(pc.sum(table.column("weight")).as_py() or 0) if table.num_rows <= limit else -1
        if rows < 0:
            rows = self.row_count()
        return table, rows

    def _count_groups(self, plan) -> int:
        names = ", ".join(f"k{i}" for i in range(len(plan)))
        return int(self._keyed(plan).aggregate("count(*) AS n", names).aggregate("count(*)").fetchone()[0])

    def _sample(self, columns: Sequence[ScanColumn], row_cap: int, seed: int) -> tuple[pa.Table, int]:
        rows = self.row_count()
        picks = sample_indices(rows, row_cap, seed)
        select = ", ".join(quote_duckdb(c.name) for c in columns)
        reader = self._sql(f"SELECT {select} FROM {self._VIEW}").to_arrow_reader(1 << 16)
        if picks is None:
            table = pa.Table.from_batches(list(reader), schema=reader.schema)
            return table, rows
        taken = []
        start = 0
        for batch in reader:
            self._check()
            end = start + batch.num_rows
            lo, hi = np.searchsorted(picks, [start, end])
            if hi > lo:
                taken.append(batch.take(pa.array(picks[lo:hi] - start)))
            start = end
        return pa.Table.from_batches(taken, schema=reader.schema), rows


# --- Spark -----------------------------------------------------------------------------------


class SparkScan(ScanEngine):
    """Scans of a PySpark DataFrame on the user's own SparkSession.

    Every job of a scan runs in the job group ``polyadic-<uuid>``, set on the scan's thread with
    ``interruptOnCancel=True``, so cancel stops it with ``cancelJobGroup``.
    """

    name = "spark"

    def __init__(self, frame: Any, frame_name: str) -> None:
        super().__init__(frame, frame_name)
        self.job_group = f"polyadic-{uuid.uuid4().hex}"
        self._partition_offsets: list[int] | None = None

    def version(self) -> str:
        return str(self.frame.sparkSession.version)

    def _engine_errors(self) -> tuple[type, ...]:
        errors: list[type] = []
        try:
            from pyspark.errors import PySparkException

            errors.append(PySparkException)
        except ImportError:  # pragma: no cover - older PySpark
            pass
        try:
            from py4j.protocol import Py4JError

            errors.append(Py4JError)
        except ImportError:  # pragma: no cover - Spark Connect without py4j
            pass
        return tuple(errors) or (Exception,)

    def _read_columns(self) -> list[ScanColumn]:
        from pyspark.sql import types as T

        columns = []
        for field in self.frame.schema.fields:
            kind = spark_column_kind(field.dataType)
            integer_types = (T.ByteType, T.ShortType, T.IntegerType, T.LongType)
            columns.append(
                ScanColumn(
                    name=field.name,
                    dtype=field.dataType.simpleString(),
                    kind=kind,
                    integer=kind == "bool" or isinstance(field.dataType, integer_types),
                    wide=isinstance(field.dataType, T.LongType),
                    floating=isinstance(field.dataType, (T.FloatType, T.DoubleType)),
                )
            )
        return columns

    def _context(self) -> Any:
        try:
            return self.frame.sparkSession.sparkContext
        except Exception:  # noqa: BLE001 - Spark Connect has no SparkContext
            return None

    def run(self, step: Callable[[], Any]) -> Any:
        context = self._context()
        if context is not None:
            context.setJobGroup(self.job_group, f"Polyadic scan of {self.frame_name}", interruptOnCancel=True)
        return super().run(step)

    def _interrupt(self) -> None:
        context = self._context()
        if context is not None:
            context.cancelJobGroup(self.job_group)

    def _col(self, column: ScanColumn) -> Any:
        from pyspark.sql import functions as F

        return F.col(quote_spark(column.name))

    def _missing(self, column: ScanColumn) -> Any:
        from pyspark.sql import functions as F

        ref = self._col(column)
        return (ref.isNull() | F.isnan(ref)) if column.floating else ref.isNull()

    def _double(self, column: ScanColumn) -> Any:
        return self._col(column).cast("double")

    def _value(self, column: ScanColumn) -> Any:
        from pyspark.sql import functions as F

        return self._double(column) + F.lit(0.0) if column.numeric else self._col(column).cast("string")

    def row_count(self) -> int:
        return int(self.frame.count())

    def _aggregate(self, columns: Sequence[ScanColumn]) -> list[ColumnAggregate]:
        from pyspark.sql import functions as F

        exprs = []
        for column in columns:
            miss = self._missing(column)
            exprs.append(F.count(F.when(miss, 1)))
            exprs.append(F.count(F.when(~miss, 1)))
            if column.numeric:
                value = F.when(~miss, self._double(column))
                exprs.append(F.min(value))
                exprs.append(F.max(value))
                inf = F.when(~miss, F.abs(self._double(column)) == F.lit(math.inf))
                exprs.append(F.coalesce(F.max(inf), F.lit(False)))
                if column.wide:
                    back = self._double(column).cast("decimal(38,0)") != self._col(column).cast("decimal(38,0)")
                    exprs.append(F.coalesce(F.max(back), F.lit(False)))
                else:
                    exprs.append(F.lit(False))
            else:
                exprs.extend([F.lit(None), F.lit(None), F.lit(False), F.lit(False)])
        row = self.frame.agg(*exprs).collect()[0]
        out = []
        for i in range(len(columns)):
            missing, count, lo, hi, inf, rounded = tuple(row)[6 * i : 6 * i + 6]
            out.append(ColumnAggregate(int(missing), int(count), lo, hi, bool(inf), bool(rounded)))
        return out

    def _levels_of(self, columns: Sequence[ScanColumn], cap: int) -> list[int]:
        # One pass for every column: each Python worker keeps up to `cap` distinct values of each
        # column of its partition (pyarrow's unique per batch), the driver takes their union. A
        # number travels as its repr (exact for a double); only pyarrow is used (pickled by value).
        from pyspark.sql import functions as F

        cap = int(cap)
        width = len(columns)

        def distinct(batches: Any) -> Any:
            import pyarrow as pa
            import pyarrow.compute as pc

            seen: list[set] = [set() for _ in range(width)]
            for batch in batches:
                for i in range(width):
                    if len(seen[i]) < cap:
                        for value in pc.unique(batch.column(i).drop_null()).to_pylist():
                            seen[i].add(value if isinstance(value, str) else repr(value))
                            if len(seen[i]) >= cap:
                                break
            index = [i for i, values in enumerate(seen) for _ in values]
            texts = [value for values in seen for value in values]
            yield pa.RecordBatch.from_arrays([pa.array(index, pa.int32()), pa.array(texts, pa.string())], names=["c", "v"])

        values = self.frame.select(
            *[F.when(~self._missing(column), self._value(column)).alias(f"v{i}") for i, column in enumerate(columns)]
        )
        union: list[set] = [set() for _ in columns]
        for i, value in values.mapInArrow(distinct, "c int, v string").collect():
            union[int(i)].add(value)
        return [min(len(found), cap) for found in union]

    def _offsets(self) -> list[int]:
        """Rows before each partition: monotonically_increasing_id() puts the partition in its
        upper 31 bits and the row within the partition in its lower 33 bits."""
        if self._partition_offsets is None:
            from pyspark.sql import functions as F

            counts = dict(
                (int(p), int(n))
                for p, n in self.frame.groupBy(F.spark_partition_id().alias("p")).count().collect()
            )
            offsets = []
            total = 0
            for p in range(max(counts) + 1 if counts else 0):
                offsets.append(total)
                total += counts.get(p, 0)
            self._partition_offsets = offsets
        return self._partition_offsets

    def _position(self, row_id: int) -> int:
        partition, within = row_id >> 33, row_id & ((1 << 33) - 1)
        return self._offsets()[partition] + within

    def _first(self, column: ScanColumn, what: str) -> tuple[int, Any]:
        from pyspark.sql import functions as F

        if what == "missing":
            flag = self._missing(column)
        else:
            flag = F.coalesce(F.abs(self._double(column)) == F.lit(math.inf), F.lit(False))
        value = self._double(column) if column.numeric else F.lit(None)
        hit = (
            self.frame.select(F.monotonically_increasing_id().alias("i"), flag.alias("f"), value.alias("v"))
            .where(F.col("f"))
            .orderBy("i")
            .limit(1)
            .collect()
        )
        if not hit:
            raise BridgeError(f"Column {column.name!r} changed while it was scanned.", column=column.name)
        return self._position(int(hit[0]["i"])), hit[0]["v"]

    def _values(self, column: ScanColumn) -> np.ndarray:
        table = self.frame.where(~self._missing(column)).select(self._double(column).alias("v")).toArrow()
        return table.column(0).to_numpy()

    def _rank_ranges(self, columns: Sequence[ScanColumn]) -> list[tuple[int, Any, Any, int, int]]:
        from pyspark.sql import functions as F

        exprs = []
        for column in columns:
            present, x = ~self._missing(column), self._double(column)
            infinite = F.abs(x) == F.lit(math.inf)
            exprs.append(F.count(F.when(present, 1)))
            exprs.append(F.min(F.when(present & ~infinite, x)))
            exprs.append(F.max(F.when(present & ~infinite, x)))
            exprs.append(F.count(F.when(present & (x == F.lit(-math.inf)), 1)))
            exprs.append(F.count(F.when(present & (x == F.lit(math.inf)), 1)))
        row = tuple(self.frame.agg(*exprs).collect()[0])
        return [row[5 * i : 5 * i + 5] for i in range(len(columns))]

    def _ranked_value(self, spec: RankRange) -> Any:
        """The range's values as doubles, null outside it."""
        from pyspark.sql import functions as F

        x = self._double(spec.column)
        outside = self._missing(spec.column)
        if spec.within is not None:
            outside = outside | (x < F.lit(spec.within[0])) | (x > F.lit(spec.within[1]))
        return F.when(~outside, x)

    # The bucket scans run numpy over Arrow batches in Spark's Python workers (mapInArrow): one
    # pass over the selected columns, with no exploded (range, value) rows to shuffle. The
    # functions shipped to the workers are built here and use only numpy and pyarrow (pickled by
    # value, so an executor needs no polyadic).
    def _range_values(self, ranges: Sequence[RankRange]) -> Any:
        """Column i: range i's values as doubles, null outside it."""
        return self.frame.select(*[self._ranked_value(spec).alias(f"v{i}") for i, spec in enumerate(ranges)])

    def _bucket_counts(self, ranges: Sequence[RankRange], buckets: int) -> list[list[Bucket]]:
        from pyspark.sql import functions as F

        keyer = _bucket_keyer([spec.bucket_scale(buckets) for spec in ranges], buckets)
        size = len(ranges) * (buckets + 2)

        def count(batches: Any) -> Any:
            counts = np.zeros(size, dtype=np.int64)
            lo = np.full(size, np.inf)
            hi = np.full(size, -np.inf)
            for batch in batches:
                keys, values = keyer(batch)
                if keys.size == 0:
                    continue
                counts += np.bincount(keys, minlength=size)
                order = np.argsort(keys, kind="stable")
                keys, values = keys[order], values[order]
                starts = np.flatnonzero(np.concatenate(([True], keys[1:] != keys[:-1])))
                at = keys[starts]
                lo[at] = np.minimum(lo[at], np.minimum.reduceat(values, starts))
                hi[at] = np.maximum(hi[at], np.maximum.reduceat(values, starts))
            used = np.flatnonzero(counts)
            yield pa.RecordBatch.from_arrays(
                [pa.array(used, pa.int64()), pa.array(counts[used]), pa.array(lo[used]), pa.array(hi[used])],
                names=["k", "n", "lo", "hi"],
            )

        partial = self._range_values(ranges).mapInArrow(count, "k long, n long, lo double, hi double")
        grouped = partial.groupBy("k").agg(F.sum("n"), F.min("lo"), F.max("hi"))
        out: list[list[Bucket]] = [[] for _ in ranges]
        for key, n, lo, hi in grouped.collect():
            i, b = divmod(int(key), buckets + 2)
            out[i].append(Bucket(b - 1, int(n), float(lo), float(hi)))
        return out

    def _bucket_values(self, ranges, buckets: int, chosen) -> list[dict[int, np.ndarray]]:
        keyer = _bucket_keyer([spec.bucket_scale(buckets) for spec in ranges], buckets)
        wanted = np.asarray(
            sorted(i * (buckets + 2) + b + 1 for i, picked in enumerate(chosen) for b in picked), dtype=np.int64
        )

        def fetch(batches: Any) -> Any:
            for batch in batches:
                keys, values = keyer(batch)
                keep = np.isin(keys, wanted)
                yield pa.RecordBatch.from_arrays([pa.array(keys[keep], pa.int64()), pa.array(values[keep])], names=["k", "v"])

        fetched = self._range_values(ranges).mapInArrow(fetch, "k long, v double").toArrow()
        return _split_by_key(fetched, len(ranges), buckets)

    def _sorted_ranks(self, spec: RankRange) -> dict[int, float]:
        # An exact distributed sort of the range's values, then the wanted ranks by position.
        wanted = frozenset(spec.ranks)
        value = self._ranked_value(spec).alias("v")
        ordered = self.frame.select(value).where("v IS NOT NULL").orderBy("v")
        found = ordered.rdd.zipWithIndex().filter(lambda pair: pair[1] in wanted).collect()
        return {int(index): float(row[0]) for row, index in found}

    def _distinct(self, column: ScanColumn) -> list[tuple[Any, int]]:
        grouped = self.frame.where(~self._missing(column)).groupBy(self._value(column).alias("v")).count()
        return [(row["v"], int(row["count"])) for row in grouped.collect()]

    def _keyed(self, plan) -> Any:
        from pyspark.sql import functions as F

        keys = []
        for index, (column, edges) in enumerate(plan):
            missing = self._missing(column)
            if edges is None:
                key = F.when(missing, F.lit(None)).otherwise(self._value(column))
            else:
                x = self._double(column)
                key = F.when(missing, F.lit(None).cast("int")).when(
                    (x < F.lit(edges[0])) | (x > F.lit(edges[-1])), F.lit(-1)
                )
                for j in range(len(edges) - 2, 0, -1):
                    key = key.when(x >= F.lit(edges[j]), F.lit(j))
                key = key.otherwise(F.lit(0)).cast("int")
            keys.append(key.alias(f"k{index}"))
        return self.frame.select(*keys)

    def _group(self, plan, limit: int) -> tuple[pa.Table, int]:
        from pyspark.sql import functions as F

        names = [f"k{i}" for i in range(len(plan))]
        grouped = self._keyed(plan).groupBy(*names).agg(F.count(F.lit(1)).cast("long").alias("weight"))
        table = grouped.limit(int(limit) + 1).toArrow()
        rows = int(pc.sum(table.column("weight")).as_py() or 0) if table.num_rows <= limit else self.row_count()
        return table, rows

    def _count_groups(self, plan) -> int:
        names = [f"k{i}" for i in range(len(plan))]
        return int(self._keyed(plan).select(*names).distinct().count())

    def _sample(self, columns: Sequence[ScanColumn], row_cap: int, seed: int) -> tuple[pa.Table, int]:
        from pyspark.sql import functions as F

        rows = self.row_count()
        picked = [self._col(c).alias(c.name) for c in columns]
        if rows <= row_cap:
            return self.frame.select(*picked).toArrow(), rows
        # The row_cap rows with the smallest seeded hash of their row id, back in row order:
        # the same rows for the same frame (same partitions) and seed.
        ids = self.frame.select(F.monotonically_increasing_id().alias("__polyadic_row"), *picked)
        chosen = ids.orderBy(F.xxhash64(F.lit(int(seed)), F.col("__polyadic_row")), F.col("__polyadic_row")).limit(row_cap)
        table = chosen.orderBy("__polyadic_row").toArrow()
        return table.drop_columns(["__polyadic_row"]), rows


def scan_engine(frame: Any, frame_name: str, connections: Callable[[], Iterable[Any]] | None = None) -> ScanEngine:
    """The scan engine of a scanned frame; BridgeError for any other object."""
    relation = duckdb_relation_type()
    if relation is not None and isinstance(frame, relation):
        return DuckDBScan(frame, frame_name, connections)
    spark_types = spark_dataframe_types()
    if spark_types and isinstance(frame, spark_types):
        return SparkScan(frame, frame_name)
    raise BridgeError(
        f"{frame_name!r} is not a scanned frame (a DuckDB relation or a Spark DataFrame).", frame=frame_name
    )


def duckdb_connections(namespace: Mapping[str, Any]) -> list[Any]:
    """DuckDB's default connection and every DuckDB connection in ``namespace``."""
    duckdb = sys.modules.get("duckdb")
    if duckdb is None:
        return []
    found = []
    default = getattr(duckdb, "default_connection", None)
    if callable(default):
        try:
            found.append(default())
        except Exception:  # noqa: BLE001
            pass
    kind = getattr(duckdb, "DuckDBPyConnection", None)
    if kind is not None:
        found.extend(v for v in list(namespace.values()) if isinstance(v, kind))
    return found
