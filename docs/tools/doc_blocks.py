"""Generated blocks in the documents of docs/: the one mechanism every table generator of docs/tools/ writes through.

A generated block sits between two marker comments in its document::

    <!-- table: NAME -->
    ...generated text, replaced in place...
    <!-- end table -->

The prose around it is written by hand and left alone. :func:`replace_tables` rewrites (or, with ``check``, only
compares) the blocks of one document; :func:`read_table` returns the text of one block (tests compare it with a
regenerated one). ``make validation-docs`` (docs/tools/validation_docs.py) runs every validation generator through
it; docs/tools/eos_validation_table.py and docs/tools/energy_tables.py use it too.
"""
from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def _pattern(name: str) -> re.Pattern[str]:
    return re.compile(rf"(<!-- table: {re.escape(name)} -->\n).*?(<!-- end table -->)", re.S)


def read_table(path: Path, name: str) -> str:
    """The text between the markers of table ``name`` in ``path`` (without the final newline)."""
    match = _pattern(name).search(Path(path).read_text(encoding="utf-8"))
    if match is None:
        raise KeyError(f"{path}: no block for table {name!r}")
    return match.group(0)[len(match.group(1)):-len(match.group(2))].removesuffix("\n")


def replace_tables(path: Path, tables: dict[str, str], check: bool = False) -> bool:
    """Put each table's text between its markers in ``path``; with ``check`` only compare and print the names of
    the blocks that differ. True when the file already held every block as given."""
    path = Path(path)
    text = path.read_text(encoding="utf-8")
    new = text
    differ = []
    for name, body in tables.items():
        pattern = _pattern(name)
        if not pattern.search(new):
            raise SystemExit(f"{path}: no block for table {name!r}")
        replaced = pattern.sub(lambda m: m.group(1) + body.removesuffix("\n") + "\n" + m.group(2), new)
        if replaced != new:
            differ.append(name)
        new = replaced
    shown = path.relative_to(ROOT) if path.is_relative_to(ROOT) else path
    if check and differ:
        print(f"{shown}: differs from the generated text in {', '.join(differ)}")
    if not check and differ:
        path.write_text(new, encoding="utf-8")
        print(f"updated {shown}: {', '.join(differ)}")
    return not differ
