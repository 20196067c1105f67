"""Executable documentation: the docstring examples of the package and the README's API example."""

import doctest
import importlib
import pkgutil
import re
from pathlib import Path

import pytest

import teakit

MODULES = sorted(
    m.name
    for m in pkgutil.walk_packages(teakit.__path__, "teakit.")
    if not m.name.endswith(("cli", "__main__"))
)


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.failed == 0, f"{result.failed} docstring example(s) failed in {name}"


def test_readme_python_example_runs():
    readme = (Path(__file__).parent.parent / "README.md").read_text()
    blocks = re.findall(r"```python\n(.*?)```", readme, flags=re.S)
    assert blocks, "README has no python example"
    for code in blocks:
        exec(compile(code, "README.md", "exec"), {})


def test_readme_numbers_are_what_the_code_gives():
    # The README quotes the equilibrium NH3 fraction at 450 degC, 300 atm for both models.
    readme = (Path(__file__).parent.parent / "README.md").read_text()
    from teakit import Reaction

    r = Reaction("N2 + 3 H2 = 2 NH3")
    real = r.equilibrium(T="450 degC", P="300 atm", feed={"N2": 1, "H2": 3})["NH3"]
    ideal = r.equilibrium(T=723.15, P=300e5, feed={"N2": 1, "H2": 3}, eos="ideal")["NH3"]
    assert f"# {real:.3f}" in readme
    assert f"# {ideal:.2f}" in readme
