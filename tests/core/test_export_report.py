"""Exporting a whole report outline: file names, contents, confidentiality, cancel, CLI."""

from __future__ import annotations

import json
from html.parser import HTMLParser

import docx
import openpyxl
import pytest

from core import outline
from core.cli.main import main as cli
from core.disclosure import treatment_appendix
from core.errors import PlaincountError
from core.export.content import slug
from core.export.report import FORMATS, check_outline, export_outline, file_names
from core.ledger import Action, Decision, record
from core.progress import Cancelled, Progress
from core.response_rates import Dispositions, save_dispositions
from core.tables.spec import TableSpec
from tests.core.outline_project import make_project, raw_table


@pytest.fixture(scope="module")
def exported(tmp_path_factory):
    folder = tmp_path_factory.mktemp("export")
    project = make_project(folder)
    wave = project.find_wave("2026")
    record(
        project,
        wave.id,
        [
            Decision(
                Action.SET_MISSING,
                "Age outside the program's range",
                ("age",),
                row=3,
                old_value=str(raw_table()["age"][3]),
            )
        ],
    )
    outline.keep(project, TableSpec("track"), title="Track of study")
    outline.keep(
        project,
        TableSpec("satisfaction", chart="bar"),
        title="Satisfaction",
        finding="Most participants were satisfied.",
    )
    outline.keep(project, TableSpec("age", chart="histogram"), title="Age")  # no finding
    outline.keep(project, TableSpec("postcode"), title="Postcode")  # personal data
    outline.keep(project, TableSpec("best_part"), title="Best part")  # comments
    warnings_before = check_outline(project)
    names = file_names(project)
    files = export_outline(project, folder / "out")
    yield project, folder / "out", files, warnings_before, names
    project.close()


def test_file_names_are_predictable(exported):
    _, out, files, _, names = exported
    written = sorted(p.name for p in files)
    assert written == sorted(
        [
            "tables.xlsx",
            "report.docx",
            "report.html",
            "01-track-of-study.csv",
            "02-satisfaction.csv",
            "02-satisfaction.png",
            "02-satisfaction.svg",
            "03-age.csv",
            "03-age.png",
            "03-age.svg",
        ]
    )
    assert all(p.parent == out and p.exists() for p in files)
    assert sorted(p.name for p in out.iterdir()) == written  # no staging folder left
    # The preview lists the same names (plus the two items privacy will leave out).
    assert set(written) <= set(names)


def test_warnings_for_privacy_and_charts_without_findings(exported):
    _, _, files, before, _ = exported
    text = " ".join(files.warnings)
    assert "“Age” is a chart without a finding sentence" in text
    assert "“Postcode” was left out" in text and "postcode" in text
    assert "“Best part” was left out" in text and "can identify" in text
    assert "Satisfaction" not in text
    assert len(before) == 3  # the same three, known before computing anything


def test_workbook_numbers_match_an_independent_count(exported):
    _, out, _, _, _ = exported
    wb = openpyxl.load_workbook(out / "tables.xlsx")
    assert wb.sheetnames == [
        "Contents",
        "01 Track of study",
        "02 Satisfaction",
        "03 Age",
        "About this workbook",
    ]
    ws = wb["01 Track of study"]
    assert ws["A1"].value == "Track of study"
    # Reference: pandas value_counts on the invented raw table.
    expected = raw_table()["track"].value_counts()
    found = {}
    for row in ws.iter_rows(min_row=1, max_col=3):
        label, count = row[0].value, row[1].value
        if label in expected.index and isinstance(count, int):
            found[label] = (count, row[1].number_format, row[2].value, row[2].number_format)
    assert set(found) == set(expected.index)
    for label, (count, fmt, share, pct_fmt) in found.items():
        assert count == expected[label] and fmt == "#,##0"
        assert share == pytest.approx(expected[label] / expected.sum(), abs=1e-9)
        assert pct_fmt == "0.0%"
    assert len(wb["02 Satisfaction"]._images) == 1
    about = {r[0].value: r[1].value for r in wb["About this workbook"].iter_rows(min_row=3)}
    assert about["Project"] == "Harbor Point test"
    assert about["Instrument"] == "Participant survey"
    assert about["Wave"] == "2026"


class _Text(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.headings: list[tuple[str, str]] = []
        self.text: list[str] = []
        self.images = 0
        self._h: str | None = None

    def handle_starttag(self, tag, attrs):
        if tag in ("h1", "h2", "h3"):
            self._h = tag
            self.headings.append((tag, ""))
        if tag == "img":
            self.images += 1

    def handle_data(self, data):
        self.text.append(data)
        if self._h:
            tag, text = self.headings[-1]
            self.headings[-1] = (tag, text + data)

    def handle_endtag(self, tag):
        if tag == self._h:
            self._h = None


def test_report_document_and_page_say_the_same_thing(exported):
    _, out, _, _, _ = exported
    document = docx.Document(out / "report.docx")
    heads = [(p.style.name, p.text) for p in document.paragraphs if p.style.name.startswith("He")]
    assert heads[:4] == [
        ("Heading 1", "Results"),
        ("Heading 2", "Track of study"),
        ("Heading 2", "Satisfaction"),
        ("Heading 2", "Age"),
    ]
    appendix = [t for s, t in heads if s == "Heading 2"][3:]
    # Every section of the cleaning module's appendix (checks, decisions, rules), then ours.
    project = exported[0]
    cleaning = [sec["heading"] for sec in treatment_appendix(project, project.waves()[0].id)]
    assert appendix == [
        *cleaning,
        "Missing data",
        "Small-cell protection",
        "Codebook of the reported items",
    ]
    assert ("Heading 1", "How the data were treated") in heads
    paragraphs = [p.text for p in document.paragraphs]
    assert "Most participants were satisfied." in paragraphs
    assert any("Age outside the program's range" in t for t in _all_text(document))
    assert len(document.inline_shapes) == 2  # two charts
    # The codebook of reported items lists exactly the reported variables.
    codebook = document.tables[-1]
    assert [r.cells[0].text for r in codebook.rows[1:]] == ["track", "satisfaction", "age"]

    page = _Text()
    page.feed((out / "report.html").read_text(encoding="utf-8"))
    assert [h for h in page.headings if h[0] in ("h2", "h3")][:4] == [
        ("h2", "Results"),
        ("h3", "Track of study"),
        ("h3", "Satisfaction"),
        ("h3", "Age"),
    ]
    assert ("h2", "How the data were treated") in page.headings
    assert page.images == 2
    assert "Age outside the program's range" in "".join(page.text)


def _all_text(document):
    yield from (p.text for p in document.paragraphs)
    for table in document.tables:
        for row in table.rows:
            for cell in row.cells:
                yield cell.text


def test_personal_data_and_comments_only_when_included(tmp_path):
    project = make_project(tmp_path)
    outline.keep(project, TableSpec("postcode"), title="Postcode")
    outline.keep(project, TableSpec("best_part"), title="Best part")
    outline.keep(project, TableSpec("track"), title="Track")
    files = export_outline(project, tmp_path / "a", ["csv"])
    assert [p.name for p in files] == ["03-track.csv"]  # numbered by outline position
    files = export_outline(
        project, tmp_path / "b", ["csv", "html"], include_personal=True, include_comments=True
    )
    assert [p.name for p in files] == [
        "report.html",
        "01-postcode.csv",
        "02-best-part.csv",
        "03-track.csv",
    ]
    page = (tmp_path / "b" / "report.html").read_text(encoding="utf-8")
    assert "Comments can identify the people who wrote them" in page
    project.close()


def test_response_rate_in_the_appendix_when_dispositions_are_entered(tmp_path):
    project = make_project(tmp_path)
    outline.keep(project, TableSpec("track"), title="Track")
    files = export_outline(project, tmp_path / "a", ["html"])
    assert "Response rate" not in files[0].read_text(encoding="utf-8")
    wave = project.find_wave("2026")
    # AAPOR Standard Definitions RR2 = (I + P) / ((I + P) + (R + NC + O) + (UH + UO))
    # = (110 + 10) / (120 + 50 + 30) = 60.0 % (METHODS.md §9).
    save_dispositions(project, wave.id, Dispositions(I=110, P=10, R=20, NC=30, UH=30))
    page = export_outline(project, tmp_path / "b", ["html"])[0].read_text(encoding="utf-8")
    parser = _Text()
    parser.feed(page)
    assert ("h3", "Response rate") in parser.headings
    assert "Response rate (AAPOR RR2): 60.0" in page
    project.close()


def test_cancel_leaves_nothing_behind(tmp_path):
    project = make_project(tmp_path)
    outline.keep(project, TableSpec("track"), title="Track")
    outline.keep(project, TableSpec("age"), title="Age")
    progress = Progress()
    progress.on_update = lambda done, total, label: progress.cancel() if done >= 2 else None
    with pytest.raises(Cancelled):
        export_outline(project, tmp_path / "out", FORMATS, progress)
    assert list((tmp_path / "out").iterdir()) == []
    project.close()


def test_a_result_that_cannot_be_computed_is_left_out_with_a_warning(tmp_path):
    project = make_project(tmp_path)
    outline.keep(project, TableSpec("age"), title="Age")
    outline.keep(project, TableSpec("track"), title="Track")
    inst = project.instruments()[0]
    project.set_codebook(inst.id, project.codebook(inst.id).without("age"))
    files = export_outline(project, tmp_path / "out", ["csv"])
    assert [p.name for p in files] == ["02-track.csv"]
    assert files.warnings[0].startswith("“Age” was left out: it cannot be computed now.")
    project.close()


def test_a_file_that_cannot_be_replaced_is_named(tmp_path):
    project = make_project(tmp_path)
    outline.keep(project, TableSpec("track"), title="Track")
    (tmp_path / "out" / "report.html").mkdir(parents=True)  # stands in for a locked file
    with pytest.raises(PlaincountError, match=r"report\.html could not be replaced"):
        export_outline(project, tmp_path / "out", ["html", "csv"])
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == ["01-track.csv", "report.html"]
    project.close()


def test_plain_errors(tmp_path):
    project = make_project(tmp_path)
    with pytest.raises(PlaincountError, match="outline is empty"):
        export_outline(project, tmp_path / "out")
    outline.keep(project, TableSpec("track"))
    with pytest.raises(PlaincountError, match="Unknown export format pdf"):
        export_outline(project, tmp_path / "out", ["pdf"])
    (tmp_path / "afile").write_text("x")
    with pytest.raises(PlaincountError, match="is a file"):
        export_outline(project, tmp_path / "afile")
    project.close()


def test_command_line_keep_outline_export(tmp_path, capsys):
    make_project(tmp_path).close()
    path = str(tmp_path / "outline.plaincount")
    assert (
        cli(
            [
                "keep",
                path,
                "satisfaction",
                "--by",
                "track",
                "--percent",
                "row",
                "--min-cell",
                "3",
                "--chart",
                "stacked100",
                "--finding",
                "Most agree.",
                "--json",
            ]
        )
        == 0
    )
    kept = json.loads(capsys.readouterr().out)
    assert kept["position"] == 1 and kept["chart"] == "stacked100"
    assert kept["spec"]["by"] == ["track"] and kept["spec"]["min_cell"] == 3
    assert cli(["keep", path, "track"]) == 0
    assert "as item 2 of the report outline" in capsys.readouterr().out
    assert cli(["outline", path, "--json"]) == 0
    listed = json.loads(capsys.readouterr().out)
    assert [i["variable"] for i in listed["items"]] == ["satisfaction", "track"]
    out = tmp_path / "out"
    assert cli(["export", path, "--out", str(out), "--formats", "csv,xlsx", "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    assert sorted(p.rsplit("/", 1)[-1] for p in result["files"]) == sorted(
        [
            "tables.xlsx",
            f"01-{slug(kept['title'])}.csv",
            f"02-{slug(listed['items'][1]['title'])}.csv",
        ]
    )
    assert result["warnings"] == []
    assert cli(["export", path, "--out", str(out), "--formats", "pdf"]) == 2
    assert "Unknown export format pdf" in capsys.readouterr().err


def test_keep_takes_every_table_option_of_the_table_command(tmp_path, capsys):
    make_project(tmp_path).close()
    path = str(tmp_path / "outline.plaincount")
    argv = [
        "keep",
        path,
        "satisfaction",
        "--wave",
        "2026",
        "--instrument",
        "Participant survey",
        "--treatment",
        "complete",
        "--complete-items",
        "age,track",
        "--sd",
        "sample",
        "--sort",
        "frequency",
        "--show-mean",
        "--pct-of-all",
        "--json",
    ]
    assert cli(argv) == 0
    spec = json.loads(capsys.readouterr().out)["spec"]
    assert spec["wave"] == "2026" and spec["instrument"] == "Participant survey"
    assert spec["treatment"] == "complete" and spec["complete_items"] == ["age", "track"]
    assert spec["sd"] == "sample" and spec["sort"] == "frequency"
    assert spec["show_mean"] is True and spec["pct_of_all"] is True
    assert spec["percent"] == TableSpec("x").percent  # untouched options keep the defaults
    assert cli(["keep", path, "track", "--chart", "pie"]) == 2
    assert "cannot be shown as a pie chart" in capsys.readouterr().err
    assert cli(["keep", path, "nothing_here"]) == 2


def test_progress_reports_each_step_in_order(tmp_path):
    project = make_project(tmp_path)
    outline.keep(project, TableSpec("track"), title="Track")
    outline.keep(project, TableSpec("age", chart="histogram"), title="Age", finding="f")
    seen = []
    progress = Progress(on_update=lambda done, total, label: seen.append((done, total, label)))
    export_outline(project, tmp_path / "out", ["xlsx", "csv"], progress)
    labels = [label for _, _, label in seen]
    assert labels[:2] == ["Computing “Track”", "Computing “Age”"]
    assert labels.index("Writing the workbook") < labels.index("Writing CSV files")
    assert seen[-1] == (4, 4, "Done")  # 2 results + 2 formats
    assert [d for d, _, _ in seen] == sorted(d for d, _, _ in seen)  # never goes backwards
    project.close()


def test_respondents_are_named_by_row_unless_personal_data_is_included(tmp_path):
    project = make_project(tmp_path)
    outline.keep(project, TableSpec("age"), title="Age")
    record(
        project,
        project.find_wave("2026").id,
        [Decision(Action.EXCLUDE, "Submitted twice", row=3, respondent="R0004")],
    )
    page = export_outline(project, tmp_path / "a", ["html"])[0].read_text(encoding="utf-8")
    assert "R0004" not in page and "row 4" in page
    page = export_outline(project, tmp_path / "b", ["html"], include_personal=True)[0]
    assert "R0004" in page.read_text(encoding="utf-8")
    project.close()
