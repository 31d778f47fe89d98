"""The key→line locator: which file line each key of a case header is on.

:func:`locate_keys` maps key paths such as ``"charge.cp"``,
``"species[2].hf"`` or ``"inerts.N2(g)"`` to file lines (array entries are
counted from 1), so that every problem found later names its line.
"""
from __future__ import annotations

import re
import tomllib

_BARE_KEY_RE = re.compile(r"[A-Za-z0-9_-]+")
_SCALAR_RE = re.compile(r"[^,\]}\r\n#]*")


class _Scanner:
    """Walks TOML text that tomllib has accepted, noting the line of each key."""

    def __init__(self, text: str, first_line: int):
        self.text = text
        self.pos = 0
        self.line = first_line
        self.lines: dict[str, int] = {}
        self.array_counts: dict[str, int] = {}

    # -- characters ---------------------------------------------------------
    def peek(self, n: int = 1) -> str:
        return self.text[self.pos:self.pos + n]

    def advance(self, n: int = 1) -> None:
        chunk = self.text[self.pos:self.pos + n]
        self.line += chunk.count("\n")
        self.pos += len(chunk)

    def skip_blank(self, newlines: bool) -> None:
        while self.pos < len(self.text):
            c = self.text[self.pos]
            if c in " \t" or (newlines and c in "\r\n"):
                self.advance()
            elif c == "#":
                end = self.text.find("\n", self.pos)
                self.advance((end if end >= 0 else len(self.text)) - self.pos)
            else:
                break

    # -- pieces ---------------------------------------------------------------
    def string_end(self) -> int:
        """Index just past the string starting at pos (IndexError if unclosed)."""
        t, p = self.text, self.pos
        for quote in ('"""', "'''"):
            if t.startswith(quote, p):
                i = p + 3
                while True:
                    if quote == '"""' and t[i] == "\\":
                        i += 2
                    elif t.startswith(quote, i):
                        j, extra = i + 3, 0  # up to two quotes may end the content
                        while extra < 2 and j < len(t) and t[j] == quote[0]:
                            j, extra = j + 1, extra + 1
                        return j
                    else:
                        i += 1
        q = t[p]
        i = p + 1
        while t[i] != q:
            i += 2 if (q == '"' and t[i] == "\\") else 1
        return i + 1

    def progress(self, before: int) -> None:
        if self.pos == before:
            raise ValueError("the scanner is stuck")

    def read_key(self) -> list[str]:
        parts = []
        while True:
            self.skip_blank(newlines=False)
            c = self.peek()
            if c in "\"'":
                end = self.string_end()
                raw = self.text[self.pos:end]
                parts.append(tomllib.loads(f"k = {raw}")["k"])
                self.advance(end - self.pos)
            else:
                m = _BARE_KEY_RE.match(self.text, self.pos)
                if not m:
                    raise ValueError("no key")
                parts.append(m.group(0))
                self.advance(m.end() - self.pos)
            self.skip_blank(newlines=False)
            if self.peek() == ".":
                self.advance()
                continue
            return parts

    def note(self, path: str, line: int) -> None:
        self.lines.setdefault(path, line)

    def note_key(self, prefix: str, parts: list[str], line: int) -> str:
        path = prefix
        for part in parts:
            path = f"{path}.{part}" if path else part
            self.note(path, line)
        return path

    def value(self, path: str) -> None:
        self.skip_blank(newlines=False)
        c = self.peek()
        if c in "\"'":
            self.advance(self.string_end() - self.pos)
        elif c == "[":
            self.advance()
            index = 0
            while True:
                before = self.pos
                self.skip_blank(newlines=True)
                if self.peek() == "]":
                    self.advance()
                    return
                index += 1
                self.note(f"{path}[{index}]", self.line)
                self.value(f"{path}[{index}]")
                self.skip_blank(newlines=True)
                if self.peek() == ",":
                    self.advance()
                self.progress(before)
        elif c == "{":
            self.advance()
            while True:
                before = self.pos
                self.skip_blank(newlines=True)
                if self.peek() == "}":
                    self.advance()
                    return
                line = self.line
                sub = self.note_key(path, self.read_key(), line)
                self.skip_blank(newlines=False)
                self.advance()  # "="
                self.value(sub)
                self.skip_blank(newlines=True)
                if self.peek() == ",":
                    self.advance()
                self.progress(before)
        else:
            m = _SCALAR_RE.match(self.text, self.pos)
            if m.end() == self.pos:
                raise ValueError("no value")
            self.advance(m.end() - self.pos)

    def table_path(self, parts: list[str], line: int) -> str:
        path = ""
        for part in parts:
            path = f"{path}.{part}" if path else part
            self.note(path, line)
            if path in self.array_counts:
                path = f"{path}[{self.array_counts[path]}]"
        return path

    def run(self) -> dict[str, int]:
        prefix = ""
        while True:
            before = self.pos
            self.skip_blank(newlines=True)
            if self.pos >= len(self.text):
                return self.lines
            line = self.line
            if self.peek(2) == "[[":
                self.advance(2)
                parts = self.read_key()
                self.advance(2)
                base = self.table_path(parts[:-1], line)
                name = f"{base}.{parts[-1]}" if base else parts[-1]
                self.array_counts[name] = self.array_counts.get(name, 0) + 1
                self.note(name, line)
                prefix = f"{name}[{self.array_counts[name]}]"
                self.note(prefix, line)
            elif self.peek() == "[":
                self.advance()
                parts = self.read_key()
                self.advance()
                prefix = self.table_path(parts, line)
                self.note(prefix, line)
            else:
                path = self.note_key(prefix, self.read_key(), line)
                self.skip_blank(newlines=False)
                self.advance()  # "="
                self.value(path)
            self.progress(before)


def locate_keys(header: str, first_line: int = 1) -> dict[str, int]:
    """Map key paths in a TOML header to line numbers.

    ``first_line`` is the file line of the header's first line.  Paths look
    like ``"pressure"``, ``"charge.cp"``, ``"species[2].hf"`` (arrays of
    tables and arrays counted from 1), ``"inerts.N2(g)"``,
    ``"decomposition.rate.power"`` and ``"temperature[2]"``.  The header is
    expected to be valid TOML; on anything unexpected the keys found so far
    are returned.
    """
    scanner = _Scanner(header, first_line)
    try:
        return scanner.run()
    except (ValueError, IndexError, RecursionError, tomllib.TOMLDecodeError):
        return scanner.lines


__all__ = ["locate_keys"]
