"""The coordination row of the worksheet carries the numbers a reader needs to check it by hand."""

from bankbuild.design.protection import CircuitContext, _coord_formula


def _ctx(rules: str, device: str = "fuse") -> CircuitContext:
    return CircuitContext(rules=rules, device=device, conductor_factor=1.35, device_factor=1.65,
                          disconnect_factor=1.35, conductor_rows=(), ampacity_attr="ampacity_a", conductor_label="",
                          device_rows=(), frame_rows=(), disconnect_rows=(), max_sets=1)


def test_nec_formula_names_device_and_ampacity():
    # NEC 240.4(B): a 100 A device may protect a 95 A conductor only as the next standard rating above it.
    assert _coord_formula(_ctx("nec"), 100, 95) == (
        "device 100 A is the next standard rating above ampacity 95 A (allowed up to 800 A)")
    assert _coord_formula(_ctx("nec"), 100, 115) == "device 100 A ≤ ampacity 115 A"


def test_iec_formula_writes_out_the_433_1_test():
    # IEC 60364-4-43 433.1 with a 125 A gG fuse: I_2 = 1.6 × 125 = 200 A; 1.45 × 144 = 208.8 A.
    text = _coord_formula(_ctx("iec"), 125, 144)
    assert text == "I_n 125 A ≤ I_z 144 A; I_2 = 1.6 × 125 = 200.0 A ≤ 1.45 × 144 = 208.8 A"
