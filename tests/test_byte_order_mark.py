"""Files as they arrive: a UTF-8 byte-order mark (and white space) before ``ISO-10303-21;`` is read,
the input is never written, a syntax error still names the input's own line, and what is not
STEP is still refused."""

from __future__ import annotations

import tempfile
import zipfile
from pathlib import Path

import pytest

from tests.corpus import data_lines, good_builder, run_inprocess, with_line, write_model
from tests.corpus import members_by_name as members

#: the UTF-8 encoding of U+FEFF (The Unicode Standard, ch. 23.8 "Specials": byte order mark EF BB BF)
BOM = b"\xef\xbb\xbf"


def leftovers() -> set[str]:
    return {p.name for p in Path(tempfile.gettempdir()).glob("modelcheck-*.ifc")}


@pytest.fixture
def plain(tmp_path: Path) -> Path:
    return write_model(good_builder(), tmp_path / "plain.ifc")


@pytest.mark.parametrize("prefix", [BOM, BOM + b"\r\n", BOM + b"\n \t\n", b"\n\n  "],
                         ids=["bom", "bom-crlf", "bom-blank-lines", "blank-lines"])
def test_a_leading_byte_order_mark_and_white_space_are_read(capsys, tmp_path, plain, prefix):
    p = tmp_path / "marked.ifc"
    p.write_bytes(prefix + plain.read_bytes())
    before = leftovers()
    got, want = members(capsys, p), members(capsys, plain)   # run_inprocess: the input is unchanged
    assert set(got) == {"H1", "H2"}
    for name in want:
        # the same members as the plain file: 20 mm bar, π·10² = 314.159 mm² (common practice)
        assert got[name]["section"] == want[name]["section"]
        assert got[name]["length"] == want[name]["length"]
    assert got["H1"]["section"]["area"]["value"] == pytest.approx(314.159, rel=1e-5)
    assert leftovers() == before   # no temporary copy left behind


def test_a_zipped_model_with_a_byte_order_mark_is_read(capsys, tmp_path, plain):
    p = tmp_path / "marked.ifczip"
    with zipfile.ZipFile(p, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("model.ifc", BOM + plain.read_bytes())
    assert set(members(capsys, p)) == {"H1", "H2"}


@pytest.mark.parametrize("prefix", [BOM, BOM + b"\n\n"], ids=["bom", "bom-two-lines"])
def test_a_syntax_error_names_the_line_of_the_input(capsys, tmp_path, plain, prefix):
    # a number no double can hold stops the parser at the entity; the line counted in the input as
    # given (a byte-order mark adds no line, each leading newline one)
    no, line = next((no, ln) for no, ln in data_lines(plain) if "IFCCIRCLEPROFILEDEF" in ln)
    broken = with_line(plain, tmp_path / "broken.ifc", no, line.replace(",10.)", ",1.E400)"))
    p = tmp_path / "marked-broken.ifc"
    p.write_bytes(prefix + broken.read_bytes())
    shift = prefix.count(b"\n")
    out = run_inprocess(capsys, ["check", str(p), "--jobs", "1", "--no-config", "--format", "json"], inputs=[p])
    assert out.code == 2
    assert len(out.errors) == 1 and str(p) in out.errors[0], out.stderr
    assert f"line {no + shift}" in out.errors[0], out.errors[0]
    text = p.read_bytes().splitlines()[no + shift - 1]
    assert b"1.E400" in text   # that line of the input is the broken one


@pytest.mark.parametrize(("data", "fragment"), [
    (BOM + b"this is a note, not a model\n", "not an IFC-SPF file"),
    (BOM + b"<?xml version='1.0'?><ifcXML/>", "is XML"),
    # the same text in UTF-16 (its byte-order mark FF FE) is not ISO 10303-21 text
    ("ISO-10303-21;\nEND-ISO-10303-21;\n".encode("utf-16"), "not an IFC-SPF file"),
    (BOM + BOM + b"ISO-10303-21;\nEND-ISO-10303-21;\n", "not an IFC-SPF file"),
], ids=["text", "xml", "utf-16", "two-marks"])
def test_what_is_not_step_is_still_refused(capsys, tmp_path, data, fragment):
    p = tmp_path / "not-a-model.ifc"
    p.write_bytes(data)
    out = run_inprocess(capsys, ["members", str(p), "--format", "json"], inputs=[p])
    assert out.code == 2
    assert len(out.errors) == 1 and str(p) in out.errors[0] and fragment in out.errors[0], out.stderr


def test_a_model_with_a_byte_order_mark_shared_out_gives_the_report_of_one_process(capsys, monkeypatch, tmp_path):
    """The copy the parser reads is deleted once opened; forked parts re-open it by its descriptor."""
    import modelcheck.run.split as parallel
    from benchmarks.make_model import build

    if not parallel.can_split():
        pytest.skip("sharing a model out needs fork (Linux)")
    plain = tmp_path / "m.ifc"
    build(120, plain)
    p = tmp_path / "marked.ifc"
    p.write_bytes(BOM + plain.read_bytes())
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 30)
    parts_run: list[int] = []
    real = parallel._run_parts
    monkeypatch.setattr(parallel, "_run_parts", lambda n: parts_run.append(n) or real(n))
    docs = []
    for path, jobs in ((plain, "1"), (p, "1"), (p, "2")):
        out = run_inprocess(capsys, ["check", str(path), "--format", "json", "--no-config", "--jobs", jobs],
                            inputs=[path])
        assert out.code in (0, 1), out.stderr
        doc = out.json()
        doc.pop("generated")
        for m in doc["models"]:
            m.pop("path")
        for r in doc["results"]:
            r.pop("model")
        docs.append(doc)
    assert parts_run == [2]   # the last run was shared out
    assert docs[1] == docs[0] and docs[2] == docs[0]
    assert docs[0]["results"]
