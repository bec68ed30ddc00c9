"""A capacitor at motor terminals: its conductor is sized to the larger of 135% and a third of the motor's."""

import pytest

from bankbuild.design.sizing import size_project
from bankbuild.spec.model import Spec
from bankbuild.tables.load import load_catalogs


def _bank(motor_conductor_a: float) -> dict:
    return {
        "name": "Pump capacitor", "supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 15},
        "motor": {"no_load_current_a": 27, "full_load_current_a": 92, "full_load_pf": 0.86,
                  "conductor_ampacity_a": motor_conductor_a},
        # the table's 30 °C base ambient, so the NEC Table 310.16 values below apply without correction
        "protection": {"conductor_ambient_c": 30},
    }


@pytest.mark.parametrize(("motor_conductor_a", "expected_size", "expected_a"), [
    # 15 kvar at 480 V: I = 15,000 / (√3 × 480) = 18.04 A; 1.35 × 18.04 = 24.4 A.
    # Motor conductor 130 A: 130 / 3 = 43.3 A governs -> 8 AWG, 50 A at 75 °C (NEC 460.8(A); NEC Table 310.16, 2023).
    (130, "8 AWG", 50),
    # Motor conductor 60 A: 60 / 3 = 20 A < 24.4 A, 135% governs -> 10 AWG, 35 A at 75 °C (NEC Table 310.16, 2023).
    (60, "10 AWG", 35),
])
def test_one_third_of_the_motor_conductor_is_a_floor(motor_conductor_a, expected_size, expected_a):
    spec = Spec.model_validate({"rules": "nec", "banks": [_bank(motor_conductor_a)]})
    bank = size_project(spec, load_catalogs()).banks[0]
    assert bank.steps[0].conductor == expected_size
    assert bank.steps[0].conductor_ampacity_a == expected_a
    assert all(c.ok for c in bank.checks if "capacitor conductor" in c.name)
