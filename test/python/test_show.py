"""``polyadic.show(record_id)``: the output bundle of a analysis cell (polyadic/show.py)."""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pyarrow as pa
import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import polyadic  # noqa: E402
from polyadic import bridge  # noqa: E402
from polyadic.show import (  # noqa: E402
    MIME_TYPE,
    RECORD_ID_PATTERN,
    analysis_bundle,
    check_record_id,
    escape_markdown,
    format_significant,
    format_value,
    markdown_fallback,
)

FIXTURE = ROOT / "test" / "record" / "fixtures" / "valid-record.json"


def ipc_bytes(table: pa.Table) -> bytes:
    sink = pa.BufferOutputStream()
    with pa.ipc.new_stream(sink, table.schema) as writer:
        writer.write_table(table)
    return sink.getvalue().to_pybytes()


def markdown_cells(markdown: str) -> list[list[str]]:
    """The body rows of the Markdown tables, split at unescaped pipes."""
    rows = []
    for line in markdown.splitlines():
        if line.startswith("| ") and not line.startswith("|---"):
            cells, cell, escaped = [], "", False
            for char in line[1:]:
                if escaped:
                    cell += char
                    escaped = False
                elif char == "\\":
                    escaped = True
                elif char == "|":
                    cells.append(cell.strip())
                    cell = ""
                else:
                    cell += char
            rows.append(cells)
    return rows


def test_pattern_is_the_schema_pattern():
    schema = json.loads((ROOT / "src" / "record" / "record.schema.json").read_text())
    assert RECORD_ID_PATTERN == schema["$defs"]["recordId"]["pattern"]


@pytest.mark.parametrize("record_id", ["pd-0fixture01", "pd-abcdefgh", "pd-" + "9" * 32])
def test_valid_ids_are_accepted(record_id):
    assert check_record_id(record_id) == record_id


@pytest.mark.parametrize(
    "record_id",
    [
        'pd-abc"); import os; os.system("ls',
        "pd-abcdefgh\n",
        "pd-abcdefgh'",
        "pd-ABCDEFGH",
        "pd-abc",
        "pd-" + "a" * 33,
        " pd-abcdefgh",
        "",
    ],
)
def test_other_ids_are_refused(record_id):
    with pytest.raises(ValueError, match="is not a Polyadic record id"):
        analysis_bundle(record_id)


def test_non_string_ids_are_refused():
    with pytest.raises(TypeError, match="is a string such as 'pd-1a2b3c4d', not int"):
        check_record_id(12345678)


def test_bundle_names_the_record_under_our_mime_type():
    bundle = analysis_bundle("pd-0fixture01")
    assert set(bundle) == {MIME_TYPE, "text/markdown"}
    assert bundle[MIME_TYPE] == {"record_id": "pd-0fixture01", "version": 1}
    assert MIME_TYPE == "application/vnd.polyadic.analysis+json"
    assert "open the notebook there to see it" in bundle["text/markdown"]
    assert bundle["text/markdown"].startswith(r"**Polyadic analysis pd\-0fixture01**")


def test_markdown_from_a_record_summary():
    record = json.loads(FIXTURE.read_text())
    summary = record["analyses"][0]["summary"]
    markdown = markdown_fallback("pd-0fixture01", summary)
    rows = markdown_cells(markdown)
    # header + synergy rows, header + redundancy rows
    assert len(rows) == 2 + len(summary["synergy"]) + len(summary["redundancy"])
    top = summary["synergy"][0]
    assert rows[1][0] == " · ".join(top["columns"])
    assert rows[1][1] == str(top["order"])
    assert rows[1][2] == f"{top['co_information']:.4f}".replace("-", "−")


def test_markdown_from_the_results_the_panel_sent():
    names = [["valve|command", "flow"], ["a", "b", "c"], ["h1", "h2"], ["x"]]
    table = pa.table(
        {
            "columns": pa.array(names, pa.list_(pa.string())),
            "order": pa.array([2, 3, 2, 1], pa.int32()),
            "entropy": [1.0, 2.0, 1.5, 1.0],
            "co_information": [-0.25, -0.75, 0.5, 1.0],
            "total_correlation": [0.1, 0.2, 0.3, 0.0],
            "dual_total_correlation": [0.1, 0.2, 0.3, 0.0],
            "o_information": [0.0, -0.5, 0.0, 0.0],
            "s_information": [0.2, 0.4, 0.6, 0.0],
        }
    )
    record_id = "pd-showtest01"
    bridge.STORE.add_chunk(record_id, 0, 1, ipc_bytes(table))
    rows = markdown_cells(markdown_fallback(record_id))
    # synergy: most negative first; redundancy: order ≥ 2 only, so the single column is left out
    assert [row[0] for row in rows] == [
        "Synergy (most negative co-information)",
        "a · b · c",
        "valve|command · flow",
        "Redundancy (most positive co-information)",
        "h1 · h2",
    ]
    assert rows[1][2:] == ["−0.7500", "−0.5000", "0.2000", "0.2000"]


def test_column_names_cannot_break_the_table_or_open_html():
    name = "a|b<img src=x onerror=alert(1)>\nnext $x$"
    escaped = escape_markdown(name)
    assert "\n" not in escaped
    assert "<" not in escaped.replace("\\<", "")
    assert "|" not in escaped.replace("\\|", "")
    assert escaped == r"a\|b\<img src\=x onerror\=alert\(1\)\> next \$x\$"


def test_bad_summary_is_refused_with_the_field():
    with pytest.raises(ValueError, match=r"summary\['synergy'\]\[0\] lacks 'order'"):
        markdown_fallback("pd-0fixture01", {"synergy": [{"columns": ["a", "b"]}], "redundancy": []})
    with pytest.raises(TypeError, match=r"must be a list of column names"):
        markdown_fallback(
            "pd-0fixture01",
            {
                "synergy": [
                    {
                        "columns": "ab",
                        "order": 2,
                        "co_information": 0,
                        "o_information": 0,
                        "total_correlation": 0,
                        "dual_total_correlation": 0,
                    }
                ]
            },
        )


def test_show_displays_the_bundle_raw(monkeypatch):
    shown = []
    import IPython.display

    monkeypatch.setattr(IPython.display, "display", lambda *objs, **kw: shown.append((objs, kw)))
    polyadic.show("pd-0fixture01")
    assert shown == [((analysis_bundle("pd-0fixture01"),), {"raw": True})]
    # the package exports the function; its module stays importable as polyadic.show
    assert polyadic.show is sys.modules["polyadic.show"].show


def test_markdown_with_evidence_shows_q_p_scope_band_and_mark():
    record = json.loads(FIXTURE.read_text())
    summary = record["analyses"][1]["summary"]
    summary["redundancy"][0]["adequacy"] = 0.5
    summary["inadequate_count"] = 1
    markdown = markdown_fallback("pd-0fixture02", summary)
    assert (
        "Benjamini–Hochberg q over 10 multiplets of orders 2–3; q controls the expected share of false "
        "discoveries among those called, not the chance that any one is false." in markdown
    )
    assert "Null band of co-information (2.5–97.5 % of surrogates): order 2 −0.0010 to 0.0020." in markdown
    rows = markdown_cells(markdown)
    assert rows[0][:5] == ["Synergy (most negative co-information)", "order", "co-information", "q", "p"]
    top = summary["synergy"][0]
    # q 0.01 and p 1/501, in four significant digits
    assert rows[1][2:5] == [format_value(top["co_information"]), "0.01000", "0.001996"]
    # a pair has no q in the fixture: a dash, and the inadequate pair is marked
    assert rows[3][0] == "valve_command · flow_l_min †" and rows[3][3:5] == ["—", "—"]
    assert "In all, 1 multiplet of order 2 and above has adequacy below 1." in markdown


def test_markdown_without_evidence_has_no_q_column():
    record = json.loads(FIXTURE.read_text())
    markdown = markdown_fallback("pd-0fixture01", record["analyses"][0]["summary"])
    assert "| q | p |" not in markdown and "Benjamini" not in markdown and "†" not in markdown


@pytest.mark.parametrize(
    "value, text",
    [
        # JavaScript's toPrecision(4) / toExponential(3), as src/panel/results/format.ts uses them
        (1e-5, "1.000e-5"),
        (0.001996007984031936, "0.001996"),
        (0.015625, "0.01563"),  # an exact half: rounded up, as JavaScript does
        (0.00099996, "1.000e-3"),
        (9999.6, "1.000e+4"),
        (123.45, "123.5"),
        (-0.25, "−0.2500"),
        (4e-13, "0"),
        (float("nan"), "NaN"),
    ],
)
def test_significant_digits_as_the_front_end_writes_them(value, text):
    assert format_significant(value) == text


def test_four_decimals_round_halves_up_and_drop_the_sign_of_zero():
    assert format_value(0.03125) == "0.0313"  # toFixed(4); Python's format gives 0.0312
    assert format_value(-0.0) == "0.0000"
    assert format_value(-0.00001) == "−0.0000"
