"""A large invented plant for the benchmarks and the scale tests: N banks of every kind the spec allows.

The plant, its lines and its figures are made up. Banks cycle through the need forms (kvar, kW and power
factors, a load list), fixed and automatic banks, plain and detuned steps, fuses and breakers, with and
without a transformer, on 480 V / 60 Hz and 400 V / 50 Hz supplies (NEC and IEC projects respectively).
"""

from __future__ import annotations

from pathlib import Path

_LOADS = """      loads:
        - {name: Compressor, quantity: 2, output_hp: 150, efficiency: 0.95, pf: 0.86}
        - {name: Fans, quantity: 6, output_kw: 11, efficiency: 0.91, pf: 0.82}
        - {name: Pumps, quantity: 3, line_current_a: 38, pf: 0.84}
        - {name: Ovens, kva: 120, pf: 0.9}
"""


def _bank(i: int, rules: str) -> str:
    v, f = (480, 60) if rules == "nec" else (400, 50)
    kind = i % 6
    kvar = 50 + (i * 37) % 600
    lines = [f"  - name: Bank {i:04d} line {i % 40 + 1}",
             f"    supply: {{voltage_v: {v}, frequency_hz: {f}"
             + (f", transformer_kva: {(750, 1000, 1500, 2000)[i % 4]}, transformer_z_pct: 5.75}}" if i % 3
                else "}")]
    if kind in (0, 3):
        lines.append(f"    need: {{kvar: {kvar}}}")
    elif kind in (1, 4):
        lines.append(f"    need: {{kw: {kvar * 3}, pf_present: 0.{72 + i % 15}, pf_target: 0.95}}")
    else:
        lines.append("    need:\n      pf_target: 0.95\n" + _LOADS.rstrip("\n"))
    if kind == 0:
        lines.append(f"    steps: {{count: {4 + i % 9}, pattern: \"1:2:2\"}}")
    elif kind == 1:
        lines.append("    steps: {count: 6}")
    elif kind == 3:
        lines.append(f"    steps: [{kvar // 4}, {kvar // 4}, {kvar // 2}]")
    if i % 5 == 0:
        lines.append("    detuning_pct: 7")
    lines.append(f"    protection: {{device: {'fuse' if i % 2 else 'breaker'}}}")
    return "\n".join(lines)


def plant_spec_text(banks: int, rules: str = "nec") -> str:
    """The YAML text of an invented plant with ``banks`` banks."""
    head = (f"# An invented plant of {banks} banks, generated for the benchmark.\n"
            f"project: {{name: Invented plant of {banks} banks, site: Benchmark estate (invented), revision: A}}\n"
            f"rules: {rules}\nbanks:\n")
    return head + "\n".join(_bank(i, rules) for i in range(banks)) + "\n"


def write_plant_spec(folder: Path, banks: int, rules: str = "nec") -> Path:
    """Write the plant's spec into ``folder`` and return its path."""
    path = Path(folder) / f"plant-{banks}.yaml"
    path.write_text(plant_spec_text(banks, rules), encoding="utf-8")
    return path
