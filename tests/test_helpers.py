"""The shared test helpers hold the values other tests rely on: the unit constants taken from pint
agree with the exact definitions of the international yard and pound (NIST SP 811, Appendix B)."""

from __future__ import annotations

import pytest

from tests.helpers import FT, IN, IN2, KIP, KIP_NIST, KN, KSI, LBF_NIST, si


def test_unit_constants_agree_with_the_exact_definitions() -> None:
    # NIST SP 811 B.8 (from memory): 1 in = 0.0254 m exactly; 1 ft = 0.3048 m exactly;
    # 1 lbf = 0.453 592 37 kg × 9.806 65 m/s²; 1 kip = 1000 lbf; 1 ksi = 1 kip/in²
    assert IN == 0.0254
    assert IN2 == pytest.approx(6.4516e-4, rel=1e-15)
    assert FT == pytest.approx(0.3048, rel=1e-15)
    assert LBF_NIST == pytest.approx(0.45359237 * 9.80665, rel=1e-15)
    assert KIP == pytest.approx(KIP_NIST, rel=1e-15)
    assert KSI == pytest.approx(KIP_NIST / 0.0254**2, rel=1e-15)
    assert KN == si(1, "kN") == 1000.0                      # SI prefix kilo (ISO 80000-1)


def test_si_reads_a_value_with_its_unit_or_a_quantity_as_text() -> None:
    assert si(235, "MPa") == si("235 MPa") == 235e6          # SI prefix mega (ISO 80000-1)
    assert si("20 ft") == pytest.approx(20 * 0.3048, rel=1e-15)
