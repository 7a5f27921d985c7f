"""tests/sources.py: every outside source complete, named where used, inside the repository."""

from __future__ import annotations

import ast
import re

import pytest
import sources
from sources import CONFIDENCE, Source, all_sources

#: Files whose text may cite sources: the code, the tests, the guides and the demo data.
CITING = ("optimiser", "tests", "duty_cycles")
GUIDES = ("README.md", "DEVELOPERS.md")
#: Notes kept outside the repository that a citation must never point to (split so that this
#: file does not itself mention them).
OUTSIDE_NOTES = ("REFERENCES" + ".md", "../" + "shared/")


def _texts(repo_root):
    """(path, text) of every text file that may cite a source."""
    for top in CITING:
        for path in sorted((repo_root / top).rglob("*")):
            if path.is_file() and path.suffix in {".py", ".md", ".csv", ".toml", ".txt"}:
                yield path, path.read_text(encoding="utf-8")
    for name in GUIDES:
        yield repo_root / name, (repo_root / name).read_text(encoding="utf-8")


@pytest.mark.parametrize("name", sorted(all_sources()))
def test_every_source_is_complete(name):
    src = all_sources()[name]
    assert src.label.strip() and src.citation.strip() and src.values.strip()
    assert src.confidence in CONFIDENCE, f"{name}: unknown confidence tag {src.confidence!r}"
    # A citation long enough to find the source again: more than a name.
    assert len(src.citation) >= 40, name
    assert name in sources.__all__


def test_every_constant_is_a_source():
    public = [n for n in vars(sources) if n.isupper() and n != "CONFIDENCE"]
    assert public and all(isinstance(getattr(sources, n), Source) for n in public)
    assert set(public) == set(all_sources())


def test_libraries_carry_their_version():
    # A library's numbers depend on its version: the version is in the citation and the field.
    assert re.fullmatch(r"\d+\.\d+\.\d+", sources.COOLPROP.version)
    assert sources.COOLPROP.version in sources.COOLPROP.citation
    assert sources.COOLPROP.version in sources.COOLPROP.label


def test_every_source_is_named_by_a_test(repo_root):
    cited = set()
    for path, text in _texts(repo_root):
        if path.parent.name == "tests" and path.name == "sources.py":
            continue
        cited |= set(re.findall(r"\bsources\.([A-Z][A-Z0-9_]+)", text))
        if path.suffix == ".py":
            for node in ast.walk(ast.parse(text)):
                if isinstance(node, ast.ImportFrom) and node.module == "sources":
                    cited |= {a.name for a in node.names if a.name.isupper()}
    unknown = cited - set(all_sources()) - {"CONFIDENCE"}
    assert not unknown, f"named but not in tests/sources.py: {sorted(unknown)}"
    unused = set(all_sources()) - cited
    assert not unused, f"in tests/sources.py but named by no test: {sorted(unused)}"


def test_nothing_cites_notes_outside_the_repository(repo_root):
    hits = [
        f"{path.relative_to(repo_root)}:{n}"
        for path, text in _texts(repo_root)
        for n, line in enumerate(text.splitlines(), 1)
        for note in OUTSIDE_NOTES
        if note in line
    ]
    assert not hits, hits
