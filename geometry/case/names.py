"""Names and text from a case file: checked before anything prints or writes them.

A winding, variant or study label may become part of a printed table, a CSV
cell or a results folder's name; a title is printed and drawn on plots.  So
every such text is bounded in length and printable, and a name is also safe as
one path component on the common file systems (no separators, not ``.`` or
``..``, not a reserved device name) and unique after Unicode normalisation
and case folding (``"PSP"`` and ``"psp"`` would be one folder on a
case-insensitive file system).  Folder names are derived from names by
:func:`folder_slug`, which is safe whatever it is given.
"""

from __future__ import annotations

import re
import unicodedata

from .errors import CaseError, printable, unprintable

MAX_NAME = 100    #: characters in a winding, variant or study label name
MAX_TITLE = 200   #: characters in a title
#: names that open a device instead of a file on Windows file systems, with or without an extension
_DEVICES = {"con", "prn", "aux", "nul", *(f"com{i}" for i in range(10)), *(f"lpt{i}" for i in range(10))}


def check_text(value: object, key: str, limit: int = MAX_TITLE, example: str = '"my transformer"') -> str:
    """A free text (a title): a string of at most ``limit`` printable characters."""
    if not isinstance(value, str):
        raise CaseError(key, "expected text", f"write it in quotes, such as {example}")
    if len(value) > limit:
        raise CaseError(key, f"is {len(value)} characters long", f"keep it to {limit} characters or fewer")
    bad = unprintable(value)
    if bad is not None:
        raise CaseError(key, f"contains the control character {printable(bad)}",
                        "use printable characters only (no line breaks, tabs or escape sequences)")
    return value


def check_name(value: object, key: str, example: str = '"primary"', path: bool = True) -> str:
    """A name: printable text of 1 to :data:`MAX_NAME` characters; with ``path``
    (a variant or study label, which names a results folder) also safe as one
    path component.  A winding name only appears in tables and files."""
    if not isinstance(value, str) or not value.strip():
        raise CaseError(key, "expected a non-empty name", f"write name = {example}")
    check_text(value, key, MAX_NAME, example)
    if not path:
        return value
    if value.strip() in (".", ".."):
        raise CaseError(key, f"{value!r} is not a name", f"give a name of letters or digits, such as {example}")
    if "/" in value or "\\" in value:
        raise CaseError(key, f"{value!r} contains a path separator", f"leave out / and \\, such as {example}")
    if value.strip().split(".")[0].strip().lower() in _DEVICES:
        raise CaseError(key, f"{value!r} is a reserved device name on some file systems",
                        f"choose another name, such as {example}")
    return value


def name_key(name: str) -> str:
    """The form in which two names collide on some file system: NFKC, case-folded."""
    return unicodedata.normalize("NFKC", name).casefold().strip()


def collides(name: str, other: str) -> bool:
    """Two names that would be one on some file system: equal after NFKC and case
    folding, or with the same folder slug in any case."""
    return name_key(name) == name_key(other) or folder_slug(name).lower() == folder_slug(other).lower()


def check_unique(name: str, earlier: list[str], key: str, what: str) -> None:
    """Refuse ``name`` when it collides (:func:`collides`) with one of ``earlier``."""
    same = next((e for e in earlier if collides(name, e)), None)
    if same is not None:
        twice = ("is defined twice" if same == name else
                 f'differs from "{printable(same)}" only in case or form' if name_key(same) == name_key(name) else
                 f'would share the results folder "{folder_slug(name)}" with "{printable(same)}"')
        raise CaseError(key, f'{what} "{printable(name)}" {twice}', f"give each {what} its own name")


def folder_slug(name: str) -> str:
    """A folder name for ``name``: letters, digits, ``.``, ``_`` and ``-`` only,
    at most 80 characters, never ``.``, ``..`` or a device name.  Checked names
    are also unique by their slug, case-folded (:func:`check_unique`)."""
    slug = re.sub(r"[^A-Za-z0-9._-]+|\.{2,}", "_", unicodedata.normalize("NFKD", name)).strip("._-")[:80] or "variant"
    return "_" + slug if slug.split(".")[0].lower() in _DEVICES else slug
