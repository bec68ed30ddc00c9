"""Table views of the results for notebooks: one row per step, check, protection line or bill-of-materials line.

The rows are built here as plain dicts (:func:`bank_rows`, :func:`project_rows`); :func:`to_frame` turns them
into a pandas DataFrame, importing pandas only then, so that the results and the command line never load it.
"""

from __future__ import annotations

from typing import Any

VIEWS = ("steps", "checks", "protection", "bom")


def _view(view: str) -> str:
    from bankbuild.errors import OptionError

    if view not in VIEWS:
        raise OptionError("", "view", f"must be one of {', '.join(VIEWS)} (got {view!r})")
    return view


def _step_row(step) -> dict[str, Any]:
    reactor = step.reactor
    contactor = step.switching.contactor if step.switching is not None else None
    return {
        "step": step.index, "target_kvar": step.target_kvar, "kvar": step.kvar, "rated_kvar": step.rated_kvar,
        "rated_current_a": step.rated_current_a, "line_current_a": step.line_current_a,
        "capacitance_uf_per_leg": step.capacitance_uf_per_leg,
        "units": ", ".join(f"{u.qty} × {u.id}" for u in step.units),
        "device": step.device, "device_rating_a": step.device_rating_a, "conductor": step.conductor,
        "conductor_ampacity_a": step.conductor_ampacity_a,
        "reactor": (reactor.reactor.designation if reactor and reactor.reactor else
                    ("made to order" if reactor else "")),
        "reactor_inductance_mh": reactor.inductance_mh if reactor else None,
        "contactor": contactor.designation if contactor else "",
    }


def _sizing_rows(bank) -> list[dict[str, Any]]:
    rows = []
    circuits = [(f"Step {s.index}", s.sizing) for s in bank.steps] + [("Main", bank.main.sizing)]
    for circuit, lines in circuits:
        for line in lines:
            rows.append({"circuit": circuit, **line.model_dump()})
    return rows


def bank_rows(bank, view: str) -> list[dict[str, Any]]:
    """The rows of one bank's ``view`` (steps, checks, protection or bom) as plain dicts."""
    view = _view(view)
    if view == "steps":
        return [_step_row(s) for s in bank.steps]
    if view == "checks":
        return [c.model_dump() for c in bank.checks]
    if view == "protection":
        return _sizing_rows(bank)
    return [line.model_dump() for line in bank.bom]


def project_rows(project, view: str) -> list[dict[str, Any]]:
    """The rows of every bank, each led by the bank's name; ``bom`` is the project's merged bill."""
    if _view(view) == "bom":
        return [line.model_dump() for line in project.bom]
    return [{"bank": bank.name, **row} for bank in project.banks for row in bank_rows(bank, view)]


def to_frame(rows: list[dict[str, Any]], view: str):
    """A pandas DataFrame of ``rows`` (pandas imported here, on first use)."""
    import pandas as pd

    frame = pd.DataFrame.from_records(rows)
    frame.attrs["view"] = view
    return frame
