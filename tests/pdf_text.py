"""Reading the PDF documents back for the tests: text per page with pypdf, and sizing a spec from a mapping."""

from __future__ import annotations

import io
import re
from pathlib import Path

import pypdf
import yaml

from bankbuild.api import run_spec


def pages_text(data: bytes) -> list[str]:
    """The text of each page, as pypdf extracts it."""
    reader = pypdf.PdfReader(io.BytesIO(data))
    return [page.extract_text() or "" for page in reader.pages]


def squash(text: str) -> str:
    """Text with every blank removed: cells wrap lines wherever they like."""
    return re.sub(r"\s+", "", text)


def whole(data: bytes) -> str:
    return squash("".join(pages_text(data)))


def size_yaml(tmp_path: Path, spec: dict, name: str = "spec.yaml"):
    path = tmp_path / name
    path.write_text(yaml.safe_dump(spec, allow_unicode=True, sort_keys=False), encoding="utf-8")
    return run_spec(path)
