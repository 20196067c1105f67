"""Run the template notebooks headless: one study, or the whole demo, into an output folder.

The template notebooks (``notebooks/`` in the source tree, shipped inside the package) each have a
papermill ``parameters`` cell (study file, sample counts, output folder). :func:`run_notebook`
executes one with given parameters (papermill; Kernel start-up dominates small runs) and writes
the executed notebook atomically; :func:`demo` runs the three template studies on the invented demo
scenarios and gathers their ``summary.json`` files into one.

Preliminary estimates only: the applicable pressure-vessel code, local regulations and licensed
engineers govern design.
"""

from __future__ import annotations

import json
import os
import tempfile
import time
from collections.abc import Callable, Mapping
from pathlib import Path

from teakit.errors import InputError

__all__ = ["DEMO", "QUICK", "TEMPLATES", "demo", "notebooks_dir", "run", "run_notebook"]

#: Template notebook per process case (``teakit run STUDY.toml`` picks by the study's case).
TEMPLATES = {"ammonia_loop": "ammonia_feasibility.ipynb", "so2_converter": "so2_converter.ipynb"}

#: The demo: (output name, notebook, parameters); ``QUICK`` overrides sample counts for --quick.
DEMO = (
    ("ammonia", "ammonia_feasibility.ipynb", {"study_file": "ammonia_port_aldren.toml", "map_points": 11}),
    ("acid", "so2_converter.ipynb", {"study_file": "acid_redmesa.toml", "map_points": 11}),
    ("uncertainty", "uncertainty.ipynb", {"study_file": "ammonia_port_aldren.toml"}),
)
QUICK = {
    "ammonia": {"map_points": 5},
    "acid": {"map_points": 5},
    "uncertainty": {"n_monte_carlo": 16, "n_sobol": 4, "n_voi": 12, "economics_only": True},
}


def notebooks_dir() -> Path:
    """Folder of the template notebooks (source tree, or the copy inside the installed package)."""
    here = Path(__file__).resolve().parent
    for d in (here.parent / "notebooks", here / "_notebooks"):
        if (d / TEMPLATES["ammonia_loop"]).is_file():
            return d
    raise InputError(f"template notebooks not found (looked in {here.parent / 'notebooks'} and {here / '_notebooks'})")


def _resolve_notebook(notebook) -> Path:
    p = Path(notebook)
    if p.is_file():
        return p
    alt = notebooks_dir() / p.name
    if alt.is_file():
        return alt
    names = ", ".join(sorted(x.name for x in notebooks_dir().glob("*.ipynb")))
    raise InputError(f"notebook {str(notebook)!r} not found; templates: {names}")


def run_notebook(notebook, out: Path, parameters: Mapping | None = None, *, overwrite: bool = False,
                 progress: bool = False) -> Path:
    """Execute one notebook with papermill and write the executed copy to ``out`` atomically.

    Parameters
    ----------
    notebook : str or Path
        A notebook file, or the name of a template notebook.
    out : Path
        The executed notebook's path (``.ipynb``).
    parameters : mapping, optional
        Values for the notebook's ``parameters`` cell.
    overwrite : bool
        Replace an existing ``out``; otherwise it is an error.
    progress : bool
        Show papermill's cell progress bar.
    """
    import papermill as pm

    src = _resolve_notebook(notebook)
    out = Path(out)
    if out.exists() and not overwrite:
        raise InputError(f"{out} exists; pass overwrite (--overwrite) to replace it")
    out.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{out.stem}.", suffix=".ipynb", dir=out.parent)
    os.close(fd)
    try:
        pm.execute_notebook(str(src), tmp, parameters=dict(parameters or {}), kernel_name="python3",
                            progress_bar=progress, cwd=str(out.parent))
        os.replace(tmp, out)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return out


def _coerce(value: str):
    """A ``-p NAME VALUE`` value: int, float, true/false, else the string."""
    low = value.lower()
    if low in ("true", "false"):
        return low == "true"
    for cast in (int, float):
        try:
            return cast(value)
        except ValueError:
            pass
    return value


def run(target, out_dir, parameters: Mapping | None = None, *, overwrite: bool = False,
        progress: bool = False, log: Callable[[str], None] = print) -> Path:
    """``teakit run``: a template notebook, or a study file through its case's template.

    Returns the executed notebook's path; figures, tables and ``summary.json`` are in
    ``out_dir/<name>/``.
    """
    target = str(target)
    params = {k: _coerce(v) if isinstance(v, str) else v for k, v in (parameters or {}).items()}
    out_dir = Path(out_dir)
    if target.endswith(".toml"):
        from teakit.study import read_study

        study = read_study(target)  # validates the file before a kernel starts
        if study.case not in TEMPLATES:
            raise InputError(f"no template notebook for case {study.case!r}; cases: {', '.join(TEMPLATES)}")
        notebook = TEMPLATES[study.case]
        path = Path(target)
        params.setdefault("study_file", str(path.resolve()) if path.is_file() else target)
        name = Path(target).stem
    elif target.endswith(".ipynb"):
        notebook, name = target, Path(target).stem
    else:
        raise InputError(f"expected a study file (.toml) or a notebook (.ipynb), got {target!r}")
    params.setdefault("out_dir", str((out_dir / name).resolve()))
    params.setdefault("overwrite", overwrite)
    t0 = time.perf_counter()
    log(f"running {Path(str(notebook)).name} -> {out_dir / name} ...")
    nb = run_notebook(notebook, out_dir / f"{name}.ipynb", params, overwrite=overwrite, progress=progress)
    log(f"  done in {time.perf_counter() - t0:.0f} s")
    return nb


def demo(out_dir="teakit-demo", *, quick: bool = False, overwrite: bool = False, progress: bool = False,
         log: Callable[[str], None] = print) -> dict:
    """``teakit demo``: run the template studies on the demo scenarios; returns the summary.

    Writes into ``out_dir``: each executed notebook, a folder per study with its figures
    (PNG/SVG/PDF), tables (CSV/XLSX) and provenance records, and ``summary.json`` gathering the
    optimum decisions, the objective at the optimum and at the maximum-yield point and, for the
    uncertainty study, NPV P10/P50/P90 and the Sobol total indices.
    """
    from teakit.export import save_json

    out_dir = Path(out_dir)
    if (out_dir / "summary.json").exists() and not overwrite:
        raise InputError(f"{out_dir / 'summary.json'} exists; pass overwrite (--overwrite) to replace the demo outputs")
    summary = {"quick": quick, "studies": {}}
    t_all = time.perf_counter()
    for i, (name, notebook, params) in enumerate(DEMO, start=1):
        p = dict(params) | (QUICK.get(name, {}) if quick else {})
        p |= {"out_dir": str((out_dir / name).resolve()), "overwrite": overwrite}
        t0 = time.perf_counter()
        log(f"[{i}/{len(DEMO)}] {name}: {notebook} ...")
        run_notebook(notebook, out_dir / f"{name}.ipynb", p, overwrite=overwrite, progress=progress)
        with open(out_dir / name / "summary.json", encoding="utf-8") as fh:
            summary["studies"][name] = json.load(fh)
        log(f"[{i}/{len(DEMO)}] {name}: done in {time.perf_counter() - t0:.0f} s")
    summary["seconds"] = round(time.perf_counter() - t_all, 1)
    save_json(summary, out_dir / "summary.json", overwrite=True)
    log(f"demo written to {out_dir} in {summary['seconds']:.0f} s (summary.json)")
    return summary
