"""``polyadic.show(record_id)``: the output of a analysis cell.

The Polyadic panel inserts a code cell ``polyadic.show("pd-…")`` for an analysis of the
notebook's record. The kernel does not see the notebook's metadata, so the output only names
the record: under Polyadic's own MIME type ``application/vnd.polyadic.analysis+json`` the
extension looks the analysis up in the notebook's record by id and draws its order histograms
and top multiplets. A ``text/markdown`` table goes beside it for renderers without Polyadic:
from a summary passed in, or from the multiplet table the panel sent to this kernel for that
id (``polyadic.results``), or else a line saying where the analysis can be seen.

Ids must match ``pd-`` followed by 8 to 32 lower-case letters or digits; anything else is
refused before any output is made. Column names are escaped in the Markdown.

A summary with evidence (``summary["evidence"]``, as a record of layout 2 holds it) adds q and p
beside co-information, a line on what the q-values were computed over and what they control,
the null band per order, and a mark on multiplets with adequacy below 1. The lines drawn from a
summary are those of src/record/markdown.ts (``markdownBody``), character for character.
"""

from __future__ import annotations

import math
import re
from decimal import ROUND_HALF_UP, Decimal
from typing import Any, Mapping, Sequence

#: MIME type of a analysis cell's output.
MIME_TYPE = "application/vnd.polyadic.analysis+json"
#: The record id pattern (src/record/record.schema.json, ``$defs/recordId``).
RECORD_ID_PATTERN = r"^pd-[0-9a-z]{8,32}$"
#: Multiplets per table in the Markdown fallback when taken from the results store.
FALLBACK_SIZE = 10
#: Decimals of the values in the Markdown tables.
DECIMALS = 4

_RECORD_ID = re.compile(r"pd-[0-9a-z]{8,32}")
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029]")
_PUNCTUATION = re.compile(r"([!-/:-@\[-`{-~])")
_MEASURES = ("co_information", "o_information", "total_correlation", "dual_total_correlation")
#: The mark after the names of a multiplet whose adequacy is below 1.
INADEQUATE_MARK = "†"
#: What a table shows for a value that was not computed for a multiplet.
NOT_COMPUTED = "—"


def check_record_id(record_id: Any) -> str:
    """Return ``record_id`` if it is a valid record id; raise TypeError or ValueError otherwise."""
    if not isinstance(record_id, str):
        raise TypeError(f"A Polyadic record id is a string such as 'pd-1a2b3c4d', not {type(record_id).__name__}.")
    if not _RECORD_ID.fullmatch(record_id):
        shown = record_id if len(record_id) <= 80 else record_id[:80] + "…"
        raise ValueError(
            f"{shown!r} is not a Polyadic record id: an id is 'pd-' followed by 8 to 32 lower-case "
            "letters or digits, as the Polyadic panel writes it."
        )
    return record_id


def escape_markdown(text: str) -> str:
    """Text made inert in Markdown, as src/record/markdown.ts does it.

    Every ASCII punctuation character is backslash-escaped (CommonMark allows it for all of
    them), so ``|`` cannot end a table cell, ``<`` cannot open HTML and ``$`` cannot open math;
    line breaks and other control characters become spaces.
    """
    return _PUNCTUATION.sub(r"\\\1", _CONTROL.sub(" ", str(text)))


def _rounded(value: float, exponent: int) -> Decimal:
    """The exact binary value rounded to a multiple of 10**exponent, halves away from zero.

    JavaScript's toFixed, toPrecision and toExponential round so (ECMA-262: of two nearest
    candidates "pick the larger n"), where Python's format rounds halves to even.
    """
    return Decimal(value).quantize(Decimal(1).scaleb(exponent), rounding=ROUND_HALF_UP)


def format_value(value: float) -> str:
    """A value with four decimals and a true minus sign (JavaScript's ``toFixed(4)``)."""
    if value == 0:
        value = 0.0  # toFixed writes −0 as 0
    text = format(_rounded(value, -DECIMALS), "f")
    return "−" + text[1:] if text.startswith("-") else text


def _significant(value: float, digits: int) -> tuple[str, int]:
    """The first ``digits`` significant digits of a positive value and its decimal exponent."""
    exponent = Decimal(value).adjusted()
    rounded = _rounded(value, exponent - digits + 1)
    if rounded.adjusted() != exponent:  # 9.9996 → 10.00
        exponent += 1
        rounded = _rounded(value, exponent - digits + 1)
    return "".join(map(str, rounded.as_tuple().digits))[:digits].ljust(digits, "0"), exponent


def format_significant(value: float) -> str:
    """A p- or q-value as src/panel/results/format.ts ``formatValue`` writes it.

    Four significant digits (``toPrecision(4)``), in exponent form (``toExponential(3)``) below
    0.001 or from 10,000; a true minus sign; 0 for zero and for magnitudes below 5e-13.
    """
    if math.isnan(value):
        return "NaN"
    if math.isinf(value):
        return "Infinity" if value > 0 else "-Infinity"
    if value == 0 or abs(value) < 5e-13:
        return "0"
    size = abs(value)
    digits, exponent = _significant(size, 4)
    if size >= 1e4 or size < 1e-3 or exponent >= 4:
        text = f"{digits[0]}.{digits[1:]}e{'+' if exponent >= 0 else '-'}{abs(exponent)}"
    elif exponent >= 3:
        text = digits
    elif exponent >= 0:
        text = f"{digits[: exponent + 1]}.{digits[exponent + 1 :]}"
    else:
        text = "0." + "0" * (-exponent - 1) + digits
    return ("−" if value < 0 else "") + text


def format_probability(value: Any) -> str:
    """A p- or q-value of a table, or a dash when it was not computed (None or NaN)."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return NOT_COMPUTED
    return format_significant(float(value))


def _count(value: int, singular: str, plural_form: str | None = None) -> str:
    """A count with grouped digits and its noun made to agree (src/engine/text.ts ``plural``)."""
    return f"{value:,} {singular if value == 1 else (plural_form or singular + 's')}"


def _orders_text(orders: Sequence[int]) -> str:
    if len(orders) == 1:
        return f"order {orders[0]}"
    contiguous = all(order == orders[i - 1] + 1 for i, order in enumerate(orders) if i > 0)
    if contiguous and orders:
        return f"orders {orders[0]}–{orders[-1]}"
    return "orders " + ", ".join(str(order) for order in orders)


def _is_inadequate(row: Mapping[str, Any]) -> bool:
    adequacy = row.get("adequacy")
    return isinstance(adequacy, (int, float)) and not isinstance(adequacy, bool) and adequacy < 1


def _evidence_lines(summary: Mapping[str, Any], sides: Mapping[str, Sequence[Mapping[str, Any]]]) -> list[str]:
    lines = []
    evidence = summary.get("evidence") or {}
    family = (evidence.get("families") or {}).get("co_information")
    if family:
        lines.append(
            f"Benjamini–Hochberg q over {_count(int(family['count']), 'multiplet')} of {_orders_text(family['orders'])}; "
            "q controls the expected share of false discoveries among those called, not the chance that any one is false."
        )
    bands = evidence.get("null_bands") or []
    if bands:
        listed = "; ".join(
            f"order {int(band['order'])} {format_value(float(band['low']))} to {format_value(float(band['high']))}" for band in bands
        )
        lines.append(f"Null band of co-information (2.5–97.5 % of surrogates): {listed}.")
    marked = any(_is_inadequate(row) for side in sides.values() for row in side)
    inadequate = summary.get("inadequate_count")
    if marked or (inadequate or 0) > 0:
        count = ""
        if inadequate is not None:
            verb = "has" if inadequate == 1 else "have"
            count = f" In all, {_count(int(inadequate), 'multiplet')} of order 2 and above {verb} adequacy below 1."
        lines.append(
            f"{INADEQUATE_MARK} adequacy below 1: fewer rows than possible joint cells, so the estimates are biased "
            f"(a rule of thumb, common practice).{count}"
        )
    return lines


def _table(title: str, rows: Sequence[Mapping[str, Any]], tested: bool = False) -> list[str]:
    if not rows:
        return [f"*{title}: none.*"]
    if tested:
        out = [
            f"| {title} | order | co-information | q | p | O-information | total correlation | dual total correlation |",
            "|---|---:|---:|---:|---:|---:|---:|---:|",
        ]
    else:
        out = [
            f"| {title} | order | co-information | O-information | total correlation | dual total correlation |",
            "|---|---:|---:|---:|---:|---:|",
        ]
    for row in rows:
        names = " · ".join(escape_markdown(name) for name in row["columns"])
        if _is_inadequate(row):
            names += f" {INADEQUATE_MARK}"
        values = [format_value(float(row[measure])) for measure in _MEASURES]
        if tested:
            values[1:1] = [format_probability(row.get("q_value")), format_probability(row.get("p_value"))]
        out.append(f"| {names} | {int(row['order'])} | {' | '.join(values)} |")
    return out


def markdown_body(summary: Mapping[str, Any]) -> list[str]:
    """The lines drawn from a record-shaped summary: the evidence lines (each a paragraph), then
    the synergy and redundancy tables; src/record/markdown.ts ``markdownBody`` writes the same."""
    sides = _check_summary(summary)
    evidence = summary.get("evidence") or {}
    tested = bool((evidence.get("families") or {}).get("co_information"))
    lines: list[str] = []
    for line in _evidence_lines(summary, sides):
        lines += [line, ""]
    return [
        *lines,
        *_table("Synergy (most negative co-information)", sides["synergy"], tested),
        "",
        *_table("Redundancy (most positive co-information)", sides["redundancy"], tested),
    ]


def _check_summary(summary: Any) -> dict[str, list[Mapping[str, Any]]]:
    """The synergy and redundancy lists of a record-shaped summary, checked."""
    if not isinstance(summary, Mapping):
        raise TypeError(f"'summary' must be a mapping with 'synergy' and 'redundancy' lists, not {type(summary).__name__}.")
    out: dict[str, list[Mapping[str, Any]]] = {}
    for side in ("synergy", "redundancy"):
        rows = summary.get(side, [])
        if not isinstance(rows, (list, tuple)):
            raise TypeError(f"summary[{side!r}] must be a list of multiplets.")
        for index, row in enumerate(rows):
            if not isinstance(row, Mapping):
                raise TypeError(f"summary[{side!r}][{index}] must be a mapping.")
            for key in ("columns", "order", *_MEASURES):
                if key not in row:
                    raise ValueError(f"summary[{side!r}][{index}] lacks {key!r}.")
            if isinstance(row["columns"], str) or not all(isinstance(c, str) for c in row["columns"]):
                raise TypeError(f"summary[{side!r}][{index}]['columns'] must be a list of column names.")
        out[side] = list(rows)
    return out


def _summary_from_results(table: Any, size: int) -> dict[str, list[Mapping[str, Any]]]:
    """The most synergistic and most redundant multiplets of a results DataFrame."""
    higher = table[table["order"] >= 2]
    finite = higher[[math.isfinite(float(v)) for v in higher["co_information"]]]
    synergy = finite[finite["co_information"] < 0].sort_values("co_information", kind="stable").head(size)
    redundancy = finite[finite["co_information"] > 0].sort_values("co_information", ascending=False, kind="stable").head(size)
    return {
        "synergy": synergy.to_dict("records"),
        "redundancy": redundancy.to_dict("records"),
    }


def markdown_fallback(record_id: str, summary: Mapping[str, Any] | None = None) -> str:
    """The text/markdown part of a analysis cell's output."""
    record_id = check_record_id(record_id)
    head = f"**Polyadic analysis {escape_markdown(record_id)}**"
    if summary is None:
        from .bridge import STORE
        from ._results import ResultsNotFound

        try:
            summary = _summary_from_results(STORE.get(record_id), FALLBACK_SIZE)
        except ResultsNotFound:
            return (
                f"{head}\n\nThe Polyadic extension for JupyterLab draws this analysis from the "
                "notebook's record; open the notebook there to see it.\n"
            )
    lines = [
        head,
        "",
        "Co-information sign (Bell 2003): negative means synergy dominates, positive redundancy.",
        "",
        *markdown_body(summary),
    ]
    return "\n".join(lines) + "\n"


def analysis_bundle(record_id: str, summary: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """The display bundle of ``show``: Polyadic's MIME type and the Markdown fallback."""
    record_id = check_record_id(record_id)
    return {
        MIME_TYPE: {"record_id": record_id, "version": 1},
        "text/markdown": markdown_fallback(record_id, summary),
    }


def show(record_id: str, summary: Mapping[str, Any] | None = None) -> None:
    """Display the analysis ``record_id`` of this notebook's Polyadic record.

    ``summary`` (optional) is a record-shaped summary, ``{"synergy": [...], "redundancy": [...]}``
    of multiplets with ``columns``, ``order`` and the measures, used for the Markdown fallback;
    with its ``evidence`` (families, null bands) and the multiplets' ``q_value``, ``p_value`` and
    ``adequacy`` the fallback shows the evidence too.
    """
    from IPython.display import display

    display(analysis_bundle(record_id, summary), raw=True)


__all__ = [
    "MIME_TYPE",
    "analysis_bundle",
    "check_record_id",
    "escape_markdown",
    "format_significant",
    "markdown_body",
    "markdown_fallback",
    "show",
]
