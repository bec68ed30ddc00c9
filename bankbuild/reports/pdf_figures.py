"""Figures the worksheet shows generically: result fields added by other parts of the pipeline (inrush,
reconnection delay, system checks) turned into label/value rows from their names, which carry their units.
"""

from __future__ import annotations

import re

from bankbuild.reports.pdf_common import num

UNIT_SUFFIXES = {"a": "A", "v": "V", "s": "s", "hz": "Hz", "uh": "µH", "mh": "mH", "uf": "µF", "ohm": "Ω",
                 "w": "W", "kw": "kW", "kvar": "kvar", "kva": "kVA", "va": "VA", "mva": "MVA", "pct": "%",
                 "ka": "kA", "pu": "pu", "c": "°C", "k": "K", "kg_m3": "kg/m³", "m3_per_h": "m³/h"}
WORDS = {"ct": "CT", "back to back": "back-to-back", "qty": "quantity", "inter step": "between steps"}


# Labels that read better than the field name does.
LABELS = {
    "ok": "Within the limits",
    "iec_duration": "IEC 60831-1 time allowed at this voltage",
    "capacitor_voltage_v": "Voltage the units see [V]",
    "light_load_voltage_v": "Voltage at light load, all steps on [V]",
    "voltage_pu": "Voltage / rated [pu]",
    "current_pu": "Current / rated [pu]",
    "kvar_pu": "kvar / rated [pu]",
    "utilisation_pu": "Delivered / nameplate kvar [pu]",
    "tuning_pct": "Tuning factor p [%]",
    "tuning_order": "Tuning order [-]",
    "unit_voltage_v": "Unit rated voltage for it [V]",
    "pf": "Power factor",
    "power_factor": "Power factor",
    "improved_pf": "Power factor with the capacitor",
    "limit_10pct_v": "10% of rated voltage [V]",
    "time_to_10pct_s": "Time to 10% of rated voltage [s]",
    "time_to_50v_s": "Time to 50 V [s]",
    "delay_s": "Delay before a step is switched on again [s]",
}


def label(name: str) -> str:
    """A field name as a label, its unit suffix in brackets.

    >>> label("peak_current_a"), label("reconnection_delay_s"), label("leading"), label("voltage_pu")
    ('Peak current [A]', 'Reconnection delay [s]', 'Leading', 'Voltage / rated [pu]')
    >>> label("airflow_m3_per_h"), label("ambient_c"), label("ct_burden_needed_va"), label("back_to_back_peak_a")
    ('Airflow [m³/h]', 'Ambient [°C]', 'CT burden needed [VA]', 'Back-to-back peak [A]')
    """
    if name in LABELS:
        return LABELS[name]
    parts = name.split("_")
    unit, words = None, " ".join(parts)
    for n in (3, 2, 1):  # the longest unit suffix first: m3_per_h, kg_m3, a
        if len(parts) > n and "_".join(parts[-n:]) in UNIT_SUFFIXES:
            unit, words = UNIT_SUFFIXES["_".join(parts[-n:])], " ".join(parts[:-n])
            break
    words = " ".join(WORDS.get(w, w) for w in words.split(" "))
    for old, new in WORDS.items():
        words = re.sub(rf"\b{old}\b", new, words)
    return words[:1].upper() + words[1:] + (f" [{unit}]" if unit else "")


def value_text(value) -> str:
    """A field value as text: yes/no, numbers with separators, unit lists as ``qty × id``.

    >>> value_text(True), value_text(1234.5), value_text(0.0734), value_text(60.0), value_text([1, 2])
    ('yes', '1,234', '0.07', '60', '1, 2')
    >>> value_text([{"id": "CU-480-60-25.0", "qty": 2, "rated_kvar": 25.0}])
    '2 × CU-480-60-25.0'
    """
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        if value.is_integer():
            return num(value, 0)
        return num(value, 2 if abs(value) < 100 else 0)
    if isinstance(value, dict):
        if {"designation", "table", "row"} <= value.keys():  # a rating picked from a table
            return f"{value['designation']} ({value['table']}, row {value['row']})"
        if "id" in value and "qty" in value:
            return f"{value['qty']} × {value['id']}"
        return "; ".join(f"{label(k)} {value_text(v)}" for k, v in value.items() if v is not None)
    if isinstance(value, list):
        return ", ".join(value_text(v) for v in value) or "—"
    return str(value)


def model_pairs(data: dict, prefix: str = "") -> list[tuple[str, str]]:
    """Label/value rows for a dumped result model; nested models are flattened one level under their label.

    >>> model_pairs({"wait_s": 45.5, "ok": True, "peak": {"current_a": 3100.0}})
    [('Wait [s]', '45.50'), ('Within the limits', 'yes'), ('Peak: current [A]', '3,100')]
    """
    pairs: list[tuple[str, str]] = []
    for key, value in data.items():
        if value is None:
            continue
        text = label(key)
        name = f"{prefix}{text[:1].lower()}{text[1:]}" if prefix else text
        picked = isinstance(value, dict) and ({"id", "qty"} <= value.keys() or {"designation", "table"} <= value.keys())
        if isinstance(value, dict) and not picked and not prefix:
            pairs += model_pairs(value, prefix=f"{label(key)}: ")
        else:
            pairs.append((name, value_text(value)))
    return pairs


def bank_pairs(bank, prefixes: tuple[str, ...]) -> list[tuple[str, str]]:
    """Label/value rows for the bank's result fields whose names start with one of ``prefixes``."""
    data = bank.model_dump()
    pairs: list[tuple[str, str]] = []
    for key in type(bank).model_fields:
        if key.startswith(prefixes) and data.get(key) is not None:
            value = data[key]
            pairs += model_pairs(value) if isinstance(value, dict) else model_pairs({key: value})
    return pairs
