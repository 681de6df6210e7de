"""Error type of the case-file layer."""

from __future__ import annotations

__all__ = ["CaseError"]


class CaseError(ValueError):
    """Bad input in a case file (or a quantity given to :func:`fdwall.units.parse_quantity`).

    The message is one paragraph naming the file, the key path (e.g.
    ``walls[0].layers[1].thickness``), what was wrong and what is allowed.

    Attributes
    ----------
    file : str
        Name of the case file ('' when not known).
    key : str
        Key path inside the file ('' for the file as a whole).
    problem : str
        What was wrong.
    allowed : str
        What is allowed instead ('' when nothing useful can be said).
    """

    def __init__(self, problem: str, *, file: str = "", key: str = "", allowed: str = ""):
        self.file = str(file or "")
        self.key = str(key or "")
        self.problem = " ".join(str(problem).split())
        self.allowed = " ".join(str(allowed).split())
        super().__init__(self._paragraph())

    def _paragraph(self) -> str:
        where = []
        if self.file:
            where.append(f"case file '{self.file}'")
        if self.key:
            where.append(f"key {self.key}")
        head = ("In " + ", ".join(where) + ": ") if where else ""
        text = head + _sentence(self.problem)
        if self.allowed:
            text += " Allowed: " + _sentence(self.allowed)
        return text

    def relocated(self, *, file: str | None = None, key: str | None = None) -> "CaseError":
        """A copy with the file and/or key filled in (where they were still empty)."""
        return CaseError(self.problem, file=self.file or (file or ""),
                         key=self.key or (key or ""), allowed=self.allowed)


def _sentence(s: str) -> str:
    s = s.strip()
    if s and s[-1] not in ".?!":
        s += "."
    return s
