"""One error family and one notice type for the whole core.

Every error a user can cause derives from :class:`NetstretchError` (a ``ValueError``, so older callers that
catch ``ValueError`` keep working).  Besides its sentence it carries structured fields — the file, line and
column concerned and what to write instead — so the CLI, the app and the report can place the message
next to what is wrong instead of matching its text.

Warnings and notices are :class:`Notice` objects: a ``kind`` (a short key views group by), the sentence,
and optionally what it is about.  A ``Notice`` *is* its sentence (it subclasses ``str``), so it prints,
joins and serialises to JSON like the plain strings used before.
"""

from __future__ import annotations


class NetstretchError(ValueError):
    """A problem the user can fix; ``str(exc)`` is one sentence saying what is wrong and what to do."""

    def __init__(self, message: str, *, file: str | None = None, line: int | None = None,
                 column: str | None = None, fix: str | None = None, kind: str | None = None, **fields):
        super().__init__(message)
        self.message = message
        self.file = file
        self.line = line
        self.column = column
        self.fix = fix
        self.kind = kind
        self.fields = fields

    def to_dict(self) -> dict:
        out = {"error": type(self).__name__, "message": self.message}
        for key in ("file", "line", "column", "fix", "kind"):
            value = getattr(self, key)
            if value is not None:
                out[key] = value
        out.update({k: v for k, v in self.fields.items() if v is not None})
        return out


class ParameterError(NetstretchError):
    """A parameter value outside its declared domain; the message names parameter, value and range."""


class UnitError(NetstretchError):
    """A unit or quantity that cannot be read, or has the wrong dimension; the message says what to write."""


class DataError(NetstretchError):
    """A problem with a lab file; the message names the file, row or column and what to do."""


class FitError(NetstretchError):
    """The fit could not be done or did not converge; the message says why and what to try."""


class ModeNotSupportedError(NetstretchError):
    """The model has no expression for this test mode (e.g. a uniaxial-only Mooney-plot form)."""


class UserError(NetstretchError):
    """A problem with command-line input; the message says what is wrong and what to do."""


class Notice(str):
    """A warning or notice: the sentence itself (``str``) plus ``kind`` and ``subject``.

    ``kind`` is a short stable key (e.g. ``"extrapolated-mode"``, ``"lock-reached"``, ``"at-bound"``,
    ``"not-identifiable"``, ``"unstable"``, ``"cleanup"``) that views use to group notices;
    ``subject`` names what it is about (a file, a compound, a mode) or is ``None``.
    """

    __slots__ = ("kind", "subject")
    kind: str
    subject: str | None

    def __new__(cls, text: str, kind: str = "note", subject: str | None = None):
        obj = super().__new__(cls, text)
        obj.kind = kind
        obj.subject = subject
        return obj

    @property
    def text(self) -> str:
        return str.__str__(self)

    def __reduce__(self):  # pickling (process pools) keeps kind and subject
        return (Notice, (self.text, self.kind, self.subject))

    def to_dict(self) -> dict:
        return {"kind": self.kind, "text": self.text, "subject": self.subject}


def about(subject: str, notice) -> Notice:
    """``notice`` (a Notice or plain sentence) said of ``subject``: "subject: sentence", same kind."""
    return Notice(f"{subject}: {notice}", getattr(notice, "kind", "note"), subject)


def merge_notices(notices) -> list[str]:
    """One line per distinct sentence: notices that say the same thing of several subjects (made by
    :func:`about`) become one line naming them all, e.g. "no planar data were fitted: planar predictions are
    extrapolations (QM-S1, QM-S3)".  Order of first appearance is kept."""
    merged: dict[tuple[str, str], list[str]] = {}
    for n in notices:
        text, subject = str.__str__(n), getattr(n, "subject", None)
        prefix = f"{subject}: " if subject else ""
        if subject and text.startswith(prefix):
            merged.setdefault((getattr(n, "kind", "note"), text[len(prefix):]), []).append(subject)
        else:
            merged.setdefault(("", text), [])
    out = []
    for (_, base), subjects in merged.items():
        if not subjects:
            out.append(base)
        elif len(subjects) == 1:
            out.append(f"{subjects[0]}: {base}")
        else:
            out.append(f"{base} ({', '.join(dict.fromkeys(subjects))})")
    return out


def group_notices(notices) -> dict[str, list[Notice]]:
    """Notices grouped by kind, in first-seen order; plain strings are kind ``"note"``."""
    out: dict[str, list[Notice]] = {}
    for n in notices:
        kind = getattr(n, "kind", "note")
        out.setdefault(kind, []).append(n if isinstance(n, Notice) else Notice(str(n)))
    return out


__all__ = ["NetstretchError", "ParameterError", "UnitError", "DataError", "FitError", "ModeNotSupportedError",
           "UserError", "Notice", "about", "group_notices", "merge_notices"]
