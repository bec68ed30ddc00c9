"""Build the wheel, install it into a fresh virtual environment, and run what a new user runs first.

Run by ``make test`` after pytest (``python tests/wheel_check.py``): the wheel must carry the LICENSE, py.typed and
every data file; installed on its own (no source tree on the path) it must run ``bankbuild --version``,
``bankbuild demo`` and the README's Python example. pip reuses its cache, so a second run takes well under a minute.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def run(*argv, cwd=None) -> str:
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "VIRTUAL_ENV")}
    done = subprocess.run([str(a) for a in argv], cwd=cwd, env=env, capture_output=True, text=True, timeout=900)
    if done.returncode != 0:
        sys.exit(f"wheel check: {' '.join(map(str, argv))} failed ({done.returncode}):\n{done.stdout}\n{done.stderr}")
    return done.stdout


def readme_example() -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    block = text.split("<!-- api-example:start -->")[1].split("<!-- api-example:end -->")[0]
    return block.split("```python")[1].split("```")[0]


def main() -> None:
    with tempfile.TemporaryDirectory(prefix="bankbuild-wheel-") as tmp:
        work = Path(tmp)
        run(sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", work / "dist", ROOT)
        (wheel,) = (work / "dist").glob("bankbuild-*.whl")
        with zipfile.ZipFile(wheel) as z:
            names = set(z.namelist())
            meta = next(z.read(n).decode() for n in names if n.endswith(".dist-info/METADATA"))
        wanted = ("bankbuild/py.typed", "bankbuild/tables/data/prices.csv", "bankbuild/spec/data/demo.yaml",
                  "bankbuild/spec/data/starter.yaml", "bankbuild/tables/data/README.md")
        missing = [p for p in wanted if p not in names]
        missing += [] if any(n.endswith(".dist-info/licenses/LICENSE") for n in names) else ["LICENSE"]
        missing += [] if "License-Expression: MIT" in meta else ["License-Expression: MIT"]
        if missing:
            sys.exit(f"wheel check: the wheel lacks {missing}")
        run(sys.executable, "-m", "venv", work / "venv")
        python = work / "venv" / "bin" / "python"
        run(python, "-m", "pip", "install", "-q", wheel)
        version = run(work / "venv" / "bin" / "bankbuild", "--version", cwd=work).strip()
        run(work / "venv" / "bin" / "bankbuild", "demo", "--out", work / "docs", cwd=work)
        docs = sorted(p.name for p in (work / "docs").iterdir())
        if "bill-of-materials.pdf" not in docs:
            sys.exit(f"wheel check: demo wrote {docs}")
        out = run(python, "-c", readme_example(), cwd=work)
        if "kvar needed" not in out:
            sys.exit(f"wheel check: the README example printed {out!r}")
        print(f"wheel check: {wheel.name} ({version}) installs, runs demo ({len(docs)} documents) and the README "
              "example")


if __name__ == "__main__":
    main()
