"""E_n number (ISO 13528:2015, Statistical methods for use in proficiency testing by
interlaboratory comparison; ISO/IEC 17043): E_n = (x - X)/sqrt(U_lab^2 + U_ref^2) with
expanded (k = 2) uncertainties, |E_n| <= 1 satisfactory [verified: NIST Dataplot
"ISO 13528 EN SCORE" page, REFERENCES §11]. Cases are hand-computed from that definition.
"""
import pytest

from calib.uncertainty import en_number, en_satisfactory


def test_hand_computed_values():
    """3-4-5: x - X = 0.5 over sqrt(0.3^2 + 0.4^2) = 0.5 -> E_n = 1.0 (on the limit, satisfactory)."""
    en = en_number(10.5, 0.3, 10.0, 0.4)
    assert en == pytest.approx(1.0, rel=1e-12)
    assert en_satisfactory(en)


def test_sign_and_unsatisfactory():
    """A low result gives negative E_n; |E_n| = 2 is unsatisfactory."""
    en = en_number(9.0, 0.0, 10.0, 0.5)
    assert en == pytest.approx(-2.0, rel=1e-12)
    assert not en_satisfactory(en)


def test_symmetric_in_uncertainties():
    assert en_number(1.2, 0.1, 1.0, 0.2) == pytest.approx(en_number(1.2, 0.2, 1.0, 0.1))


@pytest.mark.parametrize("args", [(1.0, -0.1, 1.0, 0.1), (1.0, 0.0, 1.0, 0.0),
                                  (float("nan"), 0.1, 1.0, 0.1)])
def test_bad_input(args):
    with pytest.raises(ValueError):
        en_number(*args)
