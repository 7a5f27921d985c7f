"""The Examples sections of stowflow.physics run as doctests, and every formula has one.

Each example names its source beside it (a textbook, CoolProp with its version, a directive,
or "common practice, no published source" / "regression example" for the project's own rules),
so these doctests are checks against the outside as well as documentation.
"""

from __future__ import annotations

import doctest
import importlib
import inspect
import pkgutil

import pytest
import stowflow.physics

#: Every module of stowflow.physics, by its installed name.
MODULES = sorted(
    f"stowflow.physics.{info.name}" for info in pkgutil.iter_modules(stowflow.physics.__path__)
)

#: Public functions that need no example, with the reason.
EXEMPT = {
    "stowflow.physics.nitrogen.build_table": (
        "builds and writes the committed table file with CoolProp (about a minute); not a formula"
    ),
}


def test_the_modules_are_found():
    assert set(MODULES) >= {
        "stowflow.physics.accumulator",
        "stowflow.physics.gas",
        "stowflow.physics.nitrogen",
        "stowflow.physics.thermal",
        "stowflow.physics.valves",
    }


@pytest.mark.parametrize("name", MODULES)
def test_examples_run(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module, report=True, verbose=False)
    assert result.attempted > 0, f"{name} has no examples"
    assert result.failed == 0, f"{result.failed} of {result.attempted} examples in {name} failed"


def _public_functions():
    for name in MODULES:
        module = importlib.import_module(name)
        for attr in module.__all__:
            obj = getattr(module, attr)
            if callable(obj) and not inspect.isclass(obj):
                yield f"{name}.{attr}", obj


PUBLIC = dict(_public_functions())


def test_exemptions_are_public_functions():
    assert set(EXEMPT) <= set(PUBLIC)


@pytest.mark.parametrize("qualname", sorted(set(PUBLIC) - set(EXEMPT)))
def test_every_public_function_has_an_example(qualname):
    finder = doctest.DocTestFinder(recurse=False)
    tests = finder.find(PUBLIC[qualname], qualname)
    assert any(t.examples for t in tests), f"{qualname} has no Examples section that runs"
