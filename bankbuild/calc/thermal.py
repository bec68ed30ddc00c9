"""Thermal arithmetic of the enclosure: air density and the ventilation airflow for a temperature rise."""

from __future__ import annotations

AIR_CP_J_PER_KG_K = 1005.0  # specific heat of dry air at constant pressure, ~20-40 °C (handbook value)

AIR_GAS_CONSTANT_J_PER_KG_K = 287.05  # specific gas constant of dry air (handbook value)

SEA_LEVEL_PA = 101325.0  # standard atmosphere


def air_density_kg_m3(temperature_c: float, pressure_pa: float = SEA_LEVEL_PA) -> float:
    """Density of dry air from the ideal gas law.

    Notes
    -----
    ρ = p / (R · T), R = 287.05 J/(kg·K), T in kelvin.

    Examples
    --------
    >>> round(air_density_kg_m3(20.0), 3)
    1.204
    """
    return pressure_pa / (AIR_GAS_CONSTANT_J_PER_KG_K * (temperature_c + 273.15))


def airflow_m3_per_h(losses_w: float, temperature_rise_k: float, density_kg_m3: float) -> float:
    """Air volume per hour that carries ``losses_w`` away with a rise of ``temperature_rise_k``.

    Parameters
    ----------
    losses_w : float
        Heat released inside the enclosure [W].
    temperature_rise_k : float
        Allowed rise of the air from inlet to outlet [K].
    density_kg_m3 : float
        Air density at the inlet [kg/m³].

    Returns
    -------
    float
        Airflow [m³/h].

    Notes
    -----
    Heat balance of the air stream: P = ρ · c_p · V̇ · ΔT, so V̇ = P / (ρ · c_p · ΔT); × 3600 for m³/h. The
    surface of the enclosure also sheds heat; leaving it out errs on the safe side (common practice).

    Examples
    --------
    >>> round(airflow_m3_per_h(1000.0, 10.0, 1.2))
    299
    """
    return 3600.0 * losses_w / (density_kg_m3 * AIR_CP_J_PER_KG_K * temperature_rise_k)
