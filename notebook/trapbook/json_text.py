"""JSON text as run files and imports are read: a key given twice in one object is refused.

Python's json keeps the last of two equal keys without a word, so `{"title": "a", "title":
"b"}` would be saved as "b" and the "a" the chemist also typed would be lost unseen. Every
run file and file of runs is read through `loads_once`, which names the key and where it is.
"""

from __future__ import annotations

import json
from typing import Any

from .errors import RecordError
from .record_errors import _locate
from .units import shown_input


class _FirstRepeat:
    """An object_pairs_hook that builds each object and remembers the first one holding a key twice."""

    def __init__(self) -> None:
        self.key: str | None = None
        self.holder: dict | None = None

    def __call__(self, pairs: list[tuple[str, Any]]) -> dict:
        obj = dict(pairs)
        if self.holder is None and len(obj) != len(pairs):
            seen: set[str] = set()
            for key, _ in pairs:
                if key in seen:
                    self.key, self.holder = key, obj
                    break
                seen.add(key)
        return obj


def _path_to(root: Any, target: dict) -> tuple:
    """Keys and indexes from the root to the object `target` (found by identity, without recursion)."""
    stack: list[tuple[Any, tuple]] = [(root, ())]
    while stack:
        node, path = stack.pop()
        if node is target:
            return path
        if isinstance(node, dict):
            stack.extend((v, (*path, k)) for k, v in node.items() if isinstance(v, (dict, list)))
        elif isinstance(node, list):
            stack.extend((v, (*path, i)) for i, v in enumerate(node) if isinstance(v, (dict, list)))
    return ()


def _where(root: Any, path: tuple) -> str:
    """The place in words a chemist recognises: "at the top level", "in line 'furan'", "in record 3: step 2"."""
    prefix = ""
    if isinstance(root, list) and path and isinstance(path[0], int):
        prefix, root, path = f"record {path[0] + 1}", root[path[0]], path[1:]
    inner = _locate(root, path) if path else ""
    if prefix and inner:
        return f"in {prefix}: {inner}"
    return f"in {prefix or inner}" if prefix or inner else "at the top level"


def loads_once(text: str, source: str) -> Any:
    """`json.loads(text)`, refusing an object that holds one key twice (a RecordError naming
    the key and where it is). Syntax errors are raised as json raises them, for the caller to word."""
    repeat = _FirstRepeat()
    data = json.loads(text, object_pairs_hook=repeat)
    if repeat.holder is not None:
        key = shown_input(repeat.key, 40)
        where = _where(data, _path_to(data, repeat.holder))
        raise RecordError(
            f"{source} gives the key '{key}' twice {where}; JSON would silently keep only the last one",
            f"keep one '{key}' there (the one you mean) and delete the other",
            field=repeat.key,
            got=repeat.key,
        )
    return data
