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
"""

from __future__ import annotations

import math
import re
from typing import Any, Mapping, Sequence

#: MIME type of a analysis cell's output.
MIME_TYPE = "application/vnd.polyadic.analysis+json"
#: The record id pattern (schema/record.schema.json, ``$defs/recordId``).
RECORD_ID_PATTERN = r"^pd-[0-9a-z]{8,32}$"
#: Multiplets per table in the Markdown fallback when taken from the results store.
FALLBACK_SIZE = 10
#: Decimals of the values in the Markdown tables.
DECIMALS = 4

_RECORD_ID = re.compile(r"pd-[0-9a-z]{8,32}")
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029]")
_PUNCTUATION = re.compile(r"([!-/:-@\[-`{-~])")
_MEASURES = ("co_information", "o_information", "total_correlation", "dual_total_correlation")


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


def format_value(value: float) -> str:
    """A value with four decimals and a true minus sign."""
    text = f"{value:.{DECIMALS}f}"
    return "−" + text[1:] if text.startswith("-") else text


def _table(title: str, rows: Sequence[Mapping[str, Any]]) -> list[str]:
    if not rows:
        return [f"*{title}: none.*"]
    out = [
        f"| {title} | order | co-information | O-information | total correlation | dual total correlation |",
        "|---|---:|---:|---:|---:|---:|",
    ]
    for row in rows:
        names = " · ".join(escape_markdown(name) for name in row["columns"])
        values = " | ".join(format_value(float(row[measure])) for measure in _MEASURES)
        out.append(f"| {names} | {int(row['order'])} | {values} |")
    return out


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
    sides = _check_summary(summary)
    lines = [
        head,
        "",
        "Co-information sign (Bell 2003): negative means synergy dominates, positive redundancy.",
        "",
        *_table("Synergy (most negative co-information)", sides["synergy"]),
        "",
        *_table("Redundancy (most positive co-information)", sides["redundancy"]),
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
    of multiplets with ``columns``, ``order`` and the measures, used for the Markdown fallback.
    """
    from IPython.display import display

    display(analysis_bundle(record_id, summary), raw=True)


__all__ = ["MIME_TYPE", "analysis_bundle", "check_record_id", "escape_markdown", "markdown_fallback", "show"]
