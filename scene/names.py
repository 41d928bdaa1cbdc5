"""Did-you-mean suggestions for misspelt keys, grades, parameters and units."""
from __future__ import annotations

import difflib


def did_you_mean(word: str, choices) -> str:
    """' (did you mean "x"?)' for the closest choice, or '' when nothing is close."""
    lowered = {str(c).lower(): str(c) for c in choices}
    close = difflib.get_close_matches(str(word).lower(), list(lowered), n=1, cutoff=0.6)
    return f' (did you mean "{lowered[close[0]]}"?)' if close else ""


def listing(choices) -> str:
    """'a, b or c' for a message."""
    items = [str(c) for c in choices]
    if len(items) <= 1:
        return "".join(items)
    return ", ".join(items[:-1]) + " or " + items[-1]
