"""One year of one-minute readings (525,600 rows), read, analysed and simulated by the survey, in this process.

Run by ``benchmarks/run.py`` in a child process so that its peak memory is its own:
``python benchmarks/survey_bench.py FILE.csv`` prints one JSON line: ``read_s``, ``survey_s`` (need,
proposal, controller simulation and months), ``import_s`` (pandas and numpy), ``rows`` and ``peak_mb``
(the process's peak resident memory). ``--reference`` times a plain ``pandas.read_csv`` of the same file instead.
"""

from __future__ import annotations

import json
import resource
import sys
import time


def main(argv: list[str]) -> int:
    path = argv[0]
    start = time.perf_counter()
    import numpy  # noqa: F401
    import pandas

    imported = time.perf_counter()
    if "--reference" in argv:
        frame = pandas.read_csv(path)
        done = time.perf_counter()
        print(json.dumps({"read_s": done - imported, "import_s": imported - start, "rows": len(frame),
                          "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
        return 0
    from bankbuild.design.survey import survey
    from bankbuild.spec.meter import read_meter_data
    from bankbuild.tables.load import load_catalogs

    units = load_catalogs(None).capacitor_units
    t0 = time.perf_counter()
    data = read_meter_data(path)
    t1 = time.perf_counter()
    result = survey(data, voltage_v=480.0, pf_target=0.95, units=units)
    t2 = time.perf_counter()
    print(json.dumps({"read_s": t1 - t0, "survey_s": t2 - t1, "import_s": imported - start, "rows": result.intervals,
                      "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
