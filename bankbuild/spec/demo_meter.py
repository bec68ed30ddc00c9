"""Invented metered readings for the demo: a year of the demo plant's motor-heavy packaging line (the bank
"Packaging line automatic bank" of the demo spec).

Deterministic (a seeded generator of the standard library), so the demo and the benchmark see the same data every
run. The site and the figures are made up. The profile: a base load day and night (lighting, compressed air,
chillers) at a fair power factor; two shifts on weekdays (06:00-22:00) with the line's motors at a poor power
factor; a short Saturday shift; Sundays and the two-week summer shutdown on the base load only; motor-start
spikes and noise on top.

Run ``python -m bankbuild.spec.demo_meter FILE [--minutes N] [--year Y]`` to write the CSV.
"""

from __future__ import annotations

import datetime as dt
import math
import random
import sys

HEADER = "timestamp,P (kW),Q (kvar)"


def demo_readings(minutes: int = 15, year: int = 2026, seed: int = 20261201):
    """Yield ``(time text, kW, kvar)`` for every interval of ``year`` (local time, no daylight saving).

    Parameters
    ----------
    minutes : int
        Interval between readings [min].
    year : int
        Calendar year.
    seed : int
        Seed of the generator: the same seed gives the same readings.

    Examples
    --------
    >>> rows = list(demo_readings(minutes=60, year=2026))
    >>> len(rows), rows[0][0]
    (8760, '2026-01-01 00:00')
    >>> rows == list(demo_readings(minutes=60, year=2026))
    True
    """
    rng = random.Random(seed)
    start = dt.datetime(year, 1, 1)
    end = dt.datetime(year + 1, 1, 1)
    step = dt.timedelta(minutes=minutes)
    shutdown = (dt.date(year, 7, 27), dt.date(year, 8, 9))
    t = start
    while t < end:
        hour = t.hour + t.minute / 60
        day = t.weekday()  # Monday 0
        season = 1.0 + 0.12 * math.cos(2 * math.pi * (t.timetuple().tm_yday - 200) / 365)  # chillers in summer
        base_kw = 55 * season + rng.gauss(0, 3)
        base_kvar = base_kw * 0.62 + rng.gauss(0, 2)  # PF about 0.85
        line_kw = 0.0
        off = shutdown[0] <= t.date() <= shutdown[1]
        if not off and ((day < 5 and 6 <= hour < 22) or (day == 5 and 6 <= hour < 12)):
            shift = 1.0 if hour < 14 else 0.85  # the late shift runs one filler fewer
            line_kw = 300 * shift * (0.85 + 0.15 * rng.random())
            if 9.5 <= hour < 10 or 17.5 <= hour < 18:
                line_kw *= 0.55  # breaks: conveyors idle, motors still magnetised
        line_kvar = line_kw * 0.95 + (25 if line_kw else 0)  # induction motors at part load: PF about 0.70
        if line_kw and rng.random() < 0.02:
            line_kvar += rng.uniform(30, 80)  # a large motor starting within the interval
        yield (t.strftime("%Y-%m-%d %H:%M"), round(base_kw + line_kw, 1), round(base_kvar + line_kvar, 1))
        t += step


def write_demo_csv(path, minutes: int = 15, year: int = 2026) -> int:
    """Write the readings as CSV (kW and kvar, lagging positive); returns the number of readings."""
    from pathlib import Path

    Path(path).parent.mkdir(parents=True, exist_ok=True)
    count = 0
    with open(path, "w", encoding="utf-8", newline="\n") as handle:
        handle.write(HEADER + "\n")
        for stamp, kw, kvar in demo_readings(minutes, year):
            handle.write(f"{stamp},{kw},{kvar}\n")
            count += 1
    return count


def main(argv: list[str]) -> int:
    """``FILE [--minutes N] [--year Y]``: write the demo readings."""
    args = list(argv)
    minutes, year = 15, 2026
    for flag in ("--minutes", "--year"):
        if flag in args:
            i = args.index(flag)
            value = int(args[i + 1])
            del args[i: i + 2]
            minutes, year = (value, year) if flag == "--minutes" else (minutes, value)
    if len(args) != 1:
        print("usage: python -m bankbuild.spec.demo_meter FILE [--minutes N] [--year Y]", file=sys.stderr)
        return 2
    count = write_demo_csv(args[0], minutes, year)
    print(f"wrote {args[0]}: {count:,} readings every {minutes} min (invented data)")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
