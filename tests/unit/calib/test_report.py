"""calib.report: the HTML parses, images are embedded PNGs, cautions are shown, user text is escaped.

Parsing uses the standard library's html.parser; the PNG check is the eight-byte signature of the
PNG specification (W3C / ISO/IEC 15948:2004, sec. 5.2); base64 as RFC 4648 sec. 4.
"""
import base64
import math
from html.parser import HTMLParser

import pytest

from calib.cautions import CAUTIONS
from calib.figures import k_figure, profile_figure
from calib.instruments import PointInstrument
from calib.profile import RotorPlaneProfile
from calib.report import render_report, write_report
from calib.table import PointResult, build_table

R = 0.05
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


class Collector(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.images, self.text, self.links = [], [], [], []

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        self.tags.append(tag)
        if tag == "img":
            self.images.append(attrs.get("src", ""))
        for name in ("href", "src"):
            if name in attrs:
                self.links.append(attrs[name])

    def handle_data(self, data):
        self.text.append(data)


def _table():
    area = math.pi * R ** 2
    points = [PointResult(flow=q, level="fine", cells=1000, iterations=10, converged=True,
                          wall_s=0.1, pressure_drop_Pa=12.0,
                          profile=RotorPlaneProfile.power_law(7.0, R, U_centre=q / area / 0.8))
              for q in (0.02, 0.05)]
    return build_table(points, PointInstrument(nominal_area=area), model_form_relative=0.01)


@pytest.fixture(scope="module")
def report_parts():
    table = _table()
    figures = {"k": k_figure(table),
               "profile": profile_figure(RotorPlaneProfile.power_law(7.0, R, U_centre=10.0), "1/7")}
    return table, figures


def _render(table, figures, title="Cone <A> & box", case_text='[fixture]\nkind = "cone" # a < b\n</pre><script>x</script>'):
    return render_report(title=title, case_text=case_text, table=table, figures=figures,
                         cautions=CAUTIONS, version="0.1.0", summary_rows=[("mesh cells", "12 000")],
                         warnings=["coarse level <not> converged"], date="2026-01-02")


def _parse(text):
    parser = Collector()
    parser.feed(text)
    parser.close()
    return parser


def test_figures_are_embedded_pngs(report_parts):
    table, figures = report_parts
    parser = _parse(_render(table, figures))
    assert len(parser.images) == len(figures)
    for src in parser.images:
        prefix = "data:image/png;base64,"
        assert src.startswith(prefix)
        assert base64.b64decode(src[len(prefix):], validate=True)[:8] == PNG_SIGNATURE


def test_no_external_resources_and_a_print_stylesheet(report_parts):
    table, figures = report_parts
    text = _render(table, figures)
    parser = _parse(text)
    assert all(link.startswith("data:") for link in parser.links)
    assert "link" not in parser.tags and "script" not in parser.tags
    assert "@media print" in text and "@page" in text and "break-inside: avoid" in text


def test_cautions_and_sections_present(report_parts):
    table, figures = report_parts
    body = " ".join(_parse(_render(table, figures)).text)
    for caution in CAUTIONS:
        assert caution in body
    for heading in ("Summary", "Correction table", "Figures", "Uncertainty budget", "Safety cautions",
                    "Case", "Celik", "JCGM 100:2008", "airbias 0.1.0", "2026-01-02"):
        assert heading in body
    assert "12 000" in body and "coarse level <not> converged" in body


def test_user_text_is_escaped(report_parts):
    """'<' in the title and case text stays text: no injected tags, the text reads back verbatim."""
    table, figures = report_parts
    parser = _parse(_render(table, figures))
    assert "script" not in parser.tags
    assert parser.tags.count("pre") == 1 and parser.tags.count("title") == 1
    body = "".join(parser.text)
    assert "Cone <A> & box" in body
    assert '[fixture]\nkind = "cone" # a < b\n</pre><script>x</script>' in body


def test_table_rows_and_headline(report_parts):
    table, figures = report_parts
    parser = _parse(_render(table, figures))
    assert parser.tags.count("tr") >= len(table.rows) + 1
    body = " ".join(parser.text)
    assert f"{table.rows[0].K:.4g}" in body
    assert "Largest bias" in body


def test_refuses_non_png_figures(report_parts):
    table, _ = report_parts
    with pytest.raises(ValueError, match="figures\\['k'\\]"):
        _render(table, {"k": b"GIF89a"})


def test_write_report(tmp_path, report_parts):
    table, figures = report_parts
    path = write_report(tmp_path / "report.html", title="t", case_text="c", table=table,
                        figures=figures, cautions=CAUTIONS, version="0.1.0", summary_rows=(),
                        warnings=())
    assert path.read_text().startswith("<!DOCTYPE html>")
    assert [p.name for p in tmp_path.iterdir()] == ["report.html"]
