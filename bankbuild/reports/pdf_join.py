"""Joining PDFs that this package rendered in pieces (ranges of banks, on several cores) into one document.

Only reportlab's own output is joined, whose shape is known: numbered objects ``N 0 obj … endobj`` listed in a
classic cross-reference table, a catalog whose one job is to name the page tree, one flat page tree, an
information dictionary without references, and no outlines, named destinations or forms of the catalog. Each
piece's objects are renumbered after the ones before (references are rewritten in dictionaries only, never in
stream data), its page tree is dropped and its pages are hung from one new tree in order. Each piece keeps its own
font subsets. Anything of another shape is refused with :class:`PieceError`, and the caller then renders the
document in one piece.
"""

from __future__ import annotations

import hashlib
import re
from collections.abc import Sequence

_OBJ = re.compile(rb"(\d+) 0 obj\r?\n")
_REF = re.compile(rb"(\d+) 0 R\b")
_STREAM = re.compile(rb">>\s*stream\r?\n")
_TRAILER_REF = re.compile(rb"/(Root|Info) (\d+) 0 R")
_TAG = re.compile(rb"/([A-K])([A-K]{5})\+")  # a font subset's tag, as reportlab writes it


class PieceError(ValueError):
    """A piece is not of the shape this module joins."""


def _objects(pdf: bytes) -> tuple[dict[int, bytes], int, int]:
    """Every object's body (between ``obj`` and ``endobj``) by number, and the numbers of the root and info."""
    start = pdf.rfind(b"startxref")
    trailer = pdf.rfind(b"trailer", 0, start)
    xref = pdf.rfind(b"\nxref", 0, trailer)
    if start < 0 or trailer < 0 or xref < 0:
        raise PieceError("no cross-reference table")
    refs = dict((name.decode(), int(num)) for name, num in _TRAILER_REF.findall(pdf[trailer:start]))
    if "Root" not in refs or "Info" not in refs:
        raise PieceError("no root or info in the trailer")
    lines = pdf[xref + 1:trailer].split(b"\n")
    first, count = (int(x) for x in lines[1].split())
    offsets = []
    for number, line in enumerate(lines[2:2 + count], start=first):
        fields = line.split()
        if len(fields) >= 3 and fields[2] == b"n":
            offsets.append((int(fields[0]), number))
    offsets.sort()
    ends = [at for at, _ in offsets[1:]] + [xref + 1]
    bodies = {}
    for (at, number), end in zip(offsets, ends, strict=True):
        head = _OBJ.match(pdf, at)
        if head is None or int(head.group(1)) != number:
            raise PieceError(f"object {number} is not where the table says")
        body_end = pdf.rfind(b"endobj", head.end(), end)
        if body_end < 0:
            raise PieceError(f"object {number} has no end")
        bodies[number] = pdf[head.end():body_end]
    return bodies, refs["Root"], refs["Info"]


def _dict_part(body: bytes) -> int:
    """Where the dictionary of an object ends (the start of its stream data, or the whole body)."""
    found = _STREAM.search(body)
    return found.end() if found else len(body)


def _kids(pages_body: bytes) -> list[int]:
    found = re.search(rb"/Kids\s*\[([^\]]*)\]", pages_body)
    if found is None:
        raise PieceError("the page tree lists no pages")
    return [int(n) for n in re.findall(rb"(\d+) 0 R", found.group(1))]


def join_pdfs(pieces: Sequence[bytes]) -> bytes:
    """One PDF holding the pages of ``pieces`` in order; the first piece's information dictionary."""
    if len(pieces) > 15:
        raise PieceError("more pieces than font subset tags")
    if len(pieces) == 1:
        return pieces[0]
    out = bytearray(b"%PDF-1.4\n%\x93\x8c\x8b\x9e ReportLab Generated PDF document, joined from pieces\n")
    offsets: list[int] = [0]  # object 0; objects 1 (catalog), 2 (page tree), 3 (info) are written last
    objects: list[bytes] = []
    pages: list[int] = []
    info = b""
    next_number = 4
    for index, pdf in enumerate(pieces):
        bodies, root, info_number = _objects(pdf)
        catalog = bodies.pop(root)
        if re.search(rb"/(Outlines|Names|AcroForm|Dests)\b", catalog):
            raise PieceError("the catalog holds more than the page tree")
        found = re.search(rb"/Pages (\d+) 0 R", catalog)
        if found is None:
            raise PieceError("the catalog names no page tree")
        tree = bodies.pop(int(found.group(1)))
        kids = _kids(tree)
        piece_info = bodies.pop(info_number)
        if index == 0:
            info = piece_info
        numbers = sorted(bodies)
        renumbered = {old: next_number + i for i, old in enumerate(numbers)}
        renumbered.update({root: 1, int(found.group(1)): 2, info_number: 3})

        def new_ref(match: re.Match, renumbered=renumbered) -> bytes:
            number = renumbered.get(int(match.group(1)))
            if number is None:
                raise PieceError(f"a reference to object {match.group(1).decode()}, which is not there")
            return b"%d 0 R" % number

        for old in numbers:
            body = bodies[old]
            cut = _dict_part(body)
            head = _REF.sub(new_ref, body[:cut])
            if index:  # each piece's font subsets under tags of their own (reportlab starts every file at AAAAAA)
                head = _TAG.sub(lambda m, index=index: b"/%c%s+" % (ord("K") + index, m.group(2)), head)
            objects.append(head + body[cut:])
        if any(kid not in bodies for kid in kids):
            raise PieceError("a page of the tree is missing")
        pages += [renumbered[kid] for kid in kids]
        next_number += len(numbers)
    page_tree = (b"<<\n/Count %d /Kids [ %s ] /Type /Pages\n>>\n"
                 % (len(pages), b" ".join(b"%d 0 R" % p for p in pages)))
    catalog = b"<<\n/PageMode /UseNone /Pages 2 0 R /Type /Catalog\n>>\n"
    for number, body in enumerate([catalog, page_tree, info, *objects], start=1):
        offsets.append(len(out))
        out += b"%d 0 obj\n" % number + body + b"endobj\n"
    xref = len(out)
    out += b"xref\n0 %d\n0000000000 65535 f \n" % len(offsets)
    out += b"".join(b"%010d 00000 n \n" % at for at in offsets[1:])
    digest = hashlib.md5(bytes(out), usedforsecurity=False).hexdigest().encode()
    out += (b"trailer\n<<\n/ID [<%s><%s>]\n/Info 3 0 R /Root 1 0 R /Size %d\n>>\nstartxref\n%d\n%%%%EOF\n"
            % (digest, digest, len(offsets), xref))
    return bytes(out)
