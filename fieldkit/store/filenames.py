"""File names built from what a technician typed (job numbers, machine names).

A job number is free text: ``J/2024/17``, ``..\\..\\boot``, ``CON``, or a pasted line with a NUL
in it. Used raw as a file name it could climb out of the chosen folder, be refused by Windows,
or overwrite something. :func:`safe_file_name` keeps a conservative set of characters, so a
name is always one plain file inside the folder the user chose.
"""

from __future__ import annotations

import re
import unicodedata

MAX_STEM_CHARS = 80
#: Many file systems limit a name to 255 bytes; leave room for a suffix and a counter.
MAX_STEM_BYTES = 180

# Characters kept besides letters and digits; everything else becomes "_".
_KEEP = set(" -_.+()#")
# Names Windows reserves for devices, with or without an extension (CON.json is CON too).
_RESERVED = {"CON", "PRN", "AUX", "NUL", "CONIN$", "CONOUT$"} | {
    f"{p}{i}" for p in ("COM", "LPT") for i in range(10)
}


def safe_file_name(text: str, suffix: str = ".json", *, default: str = "visit") -> str:
    """One safe file name (no folder part) for ``text`` plus ``suffix``."""
    # NFKC folds look-alikes (fullwidth solidus, ligatures) to plain characters before filtering.
    folded = unicodedata.normalize("NFKC", str(text))
    kept = "".join(ch if (ch.isalnum() and ch.isprintable()) or ch in _KEEP else "_" for ch in folded)
    kept = re.sub(r"\.{2,}", ".", kept)  # no ".." anywhere
    kept = re.sub(r"\s+", " ", kept)
    kept = re.sub(r"_{2,}", "_", kept)
    kept = kept.strip(" ._-")  # no hidden files, no trailing dot or space (Windows drops them)
    kept = kept[:MAX_STEM_CHARS]
    while len(kept.encode("utf-8")) > MAX_STEM_BYTES:
        kept = kept[:-1]
    kept = kept.rstrip(" .")
    if not kept:
        kept = default
    if kept.split(".")[0].upper().rstrip() in _RESERVED:
        kept = "_" + kept
    return kept + suffix


def export_stem(job_number: str, machine: str, date: str = "") -> str:
    """The stem an export is named after: job number, machine and date, as far as they are set."""
    return " ".join(part for part in (job_number, machine, date) if part)
