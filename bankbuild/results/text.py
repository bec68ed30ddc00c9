"""Short texts that the pipeline writes into results and the reports print beside them, defined once."""

from __future__ import annotations

from collections.abc import Iterable


def step_span(indices: Iterable[int], sep: str = ", ", word: bool = True, min_run: int = 2) -> str:
    """Step numbers as short text: a run of at least ``min_run`` as ``1–4``, otherwise joined by ``sep``.

    Parameters
    ----------
    indices : iterable of int
        Step numbers (1-based); duplicates and order do not matter.
    sep : str
        What joins numbers that do not form one run.
    word : bool
        Put "step" or "steps" in front.
    min_run : int
        The shortest run written as a range.

    Examples
    --------
    >>> step_span([1, 2, 3]), step_span([2]), step_span([1, 3]), step_span([])
    ('steps 1–3', 'step 2', 'steps 1, 3', '')
    >>> step_span([2, 4], sep="+", word=False), step_span([1, 2], sep="+", word=False, min_run=3)
    ('2+4', '1+2')
    """
    ids = sorted(set(indices))
    if not ids:
        return ""
    if len(ids) >= min_run and ids == list(range(ids[0], ids[-1] + 1)):
        text = f"{ids[0]}–{ids[-1]}"
    else:
        text = sep.join(map(str, ids))
    if not word:
        return text
    return ("step " if len(ids) == 1 else "steps ") + text
