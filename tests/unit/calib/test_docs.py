"""The documentation stays true: the key reference is current, README's commands exist."""
from pathlib import Path

from calib.cli import build_parser
from calib.docs import reference_page
from geometry.case import AIR_KEYS, AMBIENT_KEYS, MESH_KEYS, MODEL_KEYS, OPERATING_KEYS, TOP_KEYS
from geometry.segments import SEGMENT_KINDS

ROOT = Path(__file__).resolve().parents[3]


def test_case_file_reference_is_current():
    assert (ROOT / "docs" / "case-files.md").read_text() == reference_page(), \
        "regenerate with: python -m calib.docs > docs/case-files.md"


def test_every_key_is_documented():
    page = (ROOT / "docs" / "case-files.md").read_text()
    tables = [TOP_KEYS, AIR_KEYS, AMBIENT_KEYS, OPERATING_KEYS, MODEL_KEYS, MESH_KEYS]
    tables += [cls.KEYS for cls in SEGMENT_KINDS.values()]
    for keys in tables:
        for key in keys:
            assert f"`{key.name}`" in page


def test_readme_setup_commands_and_subcommands():
    readme = (ROOT / "README.md").read_text()
    assert "pip install -e . && .venv/bin/airbias demo" in readme
    assert "pip install -e '.[test]' && .venv/bin/python -m pytest" in readme
    ci = (ROOT / ".ci" / "run").read_text()
    assert "python3 -m venv .venv && .venv/bin/pip install -e '.[test]' && .venv/bin/python -m pytest" in ci
    commands = build_parser()._subparsers._group_actions[0].choices
    for name in ("demo", "table", "solve", "check", "compare", "mesh", "reference", "validate"):
        assert name in commands and f"airbias {name}" in readme
