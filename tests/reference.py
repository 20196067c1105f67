"""Helpers shared by the tests for building reference-library objects (test-only)."""

import pytest

from teakit.thermo import species_set
from teakit.thermo.species import load_table, parse_formula


def cantera_phase_from_kit(names):
    """A Cantera ideal-gas phase built from the kit's own NASA coefficients (isolates a solver).

    The reference pressure is set to 1 bar, the kit's standard state.
    """
    ct = pytest.importorskip("cantera")
    s = species_set(names)
    formulas = load_table("species").set_index("species")["formula"]
    lines = ["phases:", "- name: gas", "  thermo: ideal-gas", f"  species: [{', '.join(names)}]",
             "  elements: [" + ", ".join(s.elements) + "]", "species:"]
    for k, n in enumerate(names):
        comp = ", ".join(f"{e}: {c:g}" for e, c in parse_formula(formulas[n]).items())
        lo = ", ".join(repr(float(c)) for c in s.coeffs[0, k])
        hi = ", ".join(repr(float(c)) for c in s.coeffs[1, k])
        lines += [f"- name: {n}", f"  composition: {{{comp}}}", "  thermo:", "    model: NASA7",
                  f"    temperature-ranges: [{s.T_low[k]}, {s.T_mid[k]}, {s.T_high[k]}]",
                  "    reference-pressure: 1e5", f"    data: [[{lo}], [{hi}]]"]
    return ct.Solution(yaml="\n".join(lines) + "\n", name="gas")
