"""The case-file key reference (docs/case-files.md), generated from the key tables themselves.

Run ``python -m calib.docs > docs/case-files.md`` after changing a key; a test checks the file is current.
"""
from __future__ import annotations

from geometry.case import case_key_reference
from geometry.schema import key_reference

from .instruments import INSTRUMENTS

HEADER = """# Case files: every key

A case is a TOML file (read with Python's `tomllib`). Lengths are in millimetres, flows in litres per
second; airbias converts them to SI once, when it reads the file, and refuses unknown keys, missing
keys, wrong types and impossible dimensions with a message that names the key and the fix. Examples are
in `cases/`. This page is generated from the key tables in the code (`python -m calib.docs`).

"""


def instrument_reference() -> str:
    parts = ["#### [instrument]\n",
             "Optional; without it the instrument is the ideal area-mean reference over the head's free area.\n"]
    for kind, cls in INSTRUMENTS.items():
        parts.append(f"\n##### kind = \"{kind}\"\n\n{(cls.__doc__ or '').strip().splitlines()[0]}\n")
        parts.append("| key | type | unit | default | meaning |\n|---|---|---|---|---|")
        parts.extend(key_reference(cls.KEYS))
    return "\n".join(parts) + "\n"


def reference_page() -> str:
    return HEADER + case_key_reference().rstrip() + "\n\n" + instrument_reference()


if __name__ == "__main__":
    print(reference_page(), end="")
