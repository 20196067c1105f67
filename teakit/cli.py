"""The ``teakit`` command line.

``teakit demo`` runs the template studies headless on the invented demo scenarios and writes the
executed notebooks, figures, tables and a ``summary.json``; ``teakit run`` does the same for one
template notebook or study file. ``teakit equilibrium`` prints equilibrium compositions of a reaction over a grid of temperatures
and pressures for the ideal-gas and real-gas models, a quick look at how far an equilibrium moves
with pressure and temperature.
"""

from __future__ import annotations

import argparse
import sys

__all__ = ["main"]


def _equilibrium(args) -> int:
    import numpy as np
    import pandas as pd

    from teakit.chemistry import ReactionSystem
    from teakit.units import to_si

    system = ReactionSystem(args.reaction)
    feed = {}
    for item in args.feed:
        name, _, amount = item.partition("=")
        feed[name.strip()] = float(amount)
    T = np.array([to_si(t, "K", "--T") if not t.replace(".", "").isdigit() else float(t) for t in args.T])
    P = np.array([to_si(p, "Pa", "--P") if not p.replace(".", "").isdigit() else float(p) for p in args.P])
    product = args.product or system.species[-1]
    rows = []
    for eos in ("ideal", "peng-robinson", system.default_eos()):
        res = system.equilibrium(T=T[:, None], P=P[None, :], feed=feed, eos=eos)
        y = np.atleast_2d(res[product])
        for i, t in enumerate(T):
            for j, p in enumerate(P):
                rows.append({"model": eos, "T [degC]": t - 273.15, "P [bar]": p / 1e5,
                             f"y_{product} [mol %]": 100 * y[i, j]})
    df = pd.DataFrame(rows).drop_duplicates(["model", "T [degC]", "P [bar]"])
    table = df.pivot_table(index=["T [degC]", "P [bar]"], columns="model",
                           values=f"y_{product} [mol %]", sort=False)
    print(f"Equilibrium {product} [mol %] for {system.equations[0]!s}, feed {feed}")
    print(table.round(2).to_string())
    return 0


def _demo(args) -> int:
    from teakit.templates import demo

    demo(args.out, quick=args.quick, overwrite=args.overwrite, progress=sys.stderr.isatty())
    return 0


def _run(args) -> int:
    from teakit.templates import run

    run(args.target, args.out, dict(args.p or []), overwrite=args.overwrite, progress=sys.stderr.isatty())
    return 0


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="teakit",
        description="Techno-economic study kit for equilibrium-limited synthesis plants. "
        "Preliminary estimates only: codes, regulations and licensed engineers govern design.",
    )
    sub = p.add_subparsers(dest="command", required=True)
    dm = sub.add_parser(
        "demo",
        help="run the demo feasibility, converter and uncertainty studies into a folder",
        description="Run the template studies on the invented demo scenarios (an ammonia loop on "
        "electrolytic hydrogen; a sulfur-burning acid plant; an uncertainty study of the ammonia "
        "case): the profit-optimal operating point beside the maximum-yield point, maps, cost "
        "breakdowns, cash flows, Monte Carlo percentiles and Sobol indices. Writes the executed "
        "notebooks, figures (PNG/SVG/PDF), tables (CSV/XLSX) with provenance, and summary.json.",
    )
    dm.add_argument("--out", default="teakit-demo", metavar="DIR",
                    help="output folder (default ./teakit-demo)")
    dm.add_argument("--quick", action="store_true",
                    help="small sample counts and coarse maps: a check that everything runs (about 2 min)")
    dm.add_argument("--overwrite", action="store_true", help="replace outputs of an earlier run in DIR")
    dm.set_defaults(func=_demo)
    rn = sub.add_parser(
        "run",
        help="run one template notebook, or a study file through its case's template",
        description="Run a template notebook (.ipynb) or a study file (.toml: the template of its "
        "process case is used) headless, writing the executed notebook and the study's figures, "
        "tables and summary.json into DIR.",
    )
    rn.add_argument("target", metavar="NOTEBOOK_OR_STUDY", help="a .ipynb notebook or a .toml study file")
    rn.add_argument("-p", nargs=2, action="append", metavar=("NAME", "VALUE"),
                    help="set a value of the notebook's parameters cell, e.g. -p map_points 15 "
                    "(numbers and true/false are converted)")
    rn.add_argument("--out", default="teakit-out", metavar="DIR", help="output folder (default ./teakit-out)")
    rn.add_argument("--overwrite", action="store_true", help="replace earlier outputs in DIR")
    rn.set_defaults(func=_run)
    eq = sub.add_parser(
        "equilibrium",
        help="equilibrium composition over a grid of temperature and pressure",
        description="Print the equilibrium mole fraction of a product for a reaction over a "
        "temperature x pressure grid, with the ideal-gas, Peng-Robinson and the default "
        "real-gas models side by side.",
    )
    eq.add_argument("--reaction", default="N2 + 3 H2 = 2 NH3",
                    help="reaction equation, e.g. 'SO2 + 0.5 O2 = SO3' (default: ammonia synthesis)")
    eq.add_argument("--feed", nargs="+", default=["N2=1", "H2=3"],
                    help="feed amounts as NAME=MOLES (default: N2=1 H2=3, the stoichiometric feed)")
    eq.add_argument("--T", nargs="+", default=["400 degC", "450 degC", "500 degC"],
                    help="temperatures, with units ('450 degC') or in K (default 400, 450, 500 degC)")
    eq.add_argument("--P", nargs="+", default=["100 atm", "200 atm", "300 atm"],
                    help="absolute pressures, with units ('200 bar') or in Pa (default 100, 200, 300 atm)")
    eq.add_argument("--product", default=None, help="species to report (default: last species)")
    eq.set_defaults(func=_equilibrium)
    return p


def main(argv=None) -> int:
    from teakit.errors import TeakitError

    args = build_parser().parse_args(argv)
    try:
        return args.func(args)
    except TeakitError as exc:
        print(f"teakit: error: {exc}", file=sys.stderr)
        return 2
    except Exception as exc:  # a notebook cell failed: say which, without a kernel traceback dump
        if type(exc).__name__ == "PapermillExecutionError":
            print(f"teakit: error: notebook cell {exc.exec_count} raised {exc.ename}: {exc.evalue}", file=sys.stderr)
            return 1
        raise


if __name__ == "__main__":
    raise SystemExit(main())
