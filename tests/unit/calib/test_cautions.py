"""calib.cautions: one tuple of short plain-text cautions."""
from calib.cautions import CAUTIONS, LIMITS_OF_RESULTS, cautions_text


def test_cautions_are_short_plain_strings():
    assert len(CAUTIONS) >= 6
    for caution in CAUTIONS:
        assert isinstance(caution, str) and caution.strip() == caution
        assert caution.count(". ") + caution.count("; ") <= 3  # one or two sentences
        assert len(caution) < 300


def test_topics_covered():
    text = " ".join(CAUTIONS).lower()
    for word in ("unattended", "thermal cut-out", "rcd", "unplug", "impeller", "burst", "hearing"):
        assert word in text


def test_limits_statement_and_text_block():
    assert LIMITS_OF_RESULTS == ("airbias results are engineering estimates; they do not replace "
                                 "accredited calibration, the instrument maker's instructions, or "
                                 "local codes and standards.")
    assert cautions_text().count("\n") == len(CAUTIONS) - 1
