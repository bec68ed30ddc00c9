"""The coordination row of the worksheet carries the numbers a reader needs to check it by hand."""

from bankbuild.design.protection import CircuitContext, _coord_formula


def _ctx(rules: str, catalogs, device: str = "fuse") -> CircuitContext:
    rows = tuple(r for r in catalogs.device_ratings if (r.basis, r.device) == (rules, device))
    return CircuitContext(rules=rules, device=device, conductor_factor=1.35, device_factor=1.65,
                          disconnect_factor=1.35, conductor_rows=(), ampacity_attr="ampacity_a", conductor_label="",
                          device_rows=rows, frame_rows=(), disconnect_rows=(), max_sets=1)


def test_nec_formula_names_device_and_ampacity(catalogs):
    # NEC 240.4(B): a 100 A device may protect a 95 A conductor only as the next standard rating above it
    # (95 A is not itself a NEC 240.6(A) rating).
    assert _coord_formula(_ctx("nec", catalogs), 100, 95) == (
        "device 100 A is the next standard rating above ampacity 95 A, which is not itself a standard rating "
        "(≤ 800 A)")
    assert _coord_formula(_ctx("nec", catalogs), 100, 115) == "device 100 A ≤ ampacity 115 A"
    # NEC 240.4(B)(2): 60 A on a 50 A conductor is refused, and the text says why.
    assert "is itself a standard rating" in _coord_formula(_ctx("nec", catalogs), 60, 50)


def test_iec_formula_writes_out_the_433_1_test(catalogs):
    # IEC 60364-4-43 433.1 with a 125 A gG fuse: I_2 = 1.6 × 125 = 200 A; 1.45 × 144 = 208.8 A.
    text = _coord_formula(_ctx("iec", catalogs), 125, 144)
    assert text == "I_n 125 A ≤ I_z 144 A; I_2 = 1.6 × 125 = 200.0 A ≤ 1.45 × 144 = 208.8 A"
