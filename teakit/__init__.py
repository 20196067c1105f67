"""teakit: techno-economic study kit for equilibrium-limited gas-phase synthesis plants.

Preliminary estimates only: wall thicknesses, pressures and temperatures that teakit reports are
for feasibility studies, not for design or fabrication. The applicable pressure-vessel code, local
regulations and a licensed engineer govern any real design, particularly in hydrogen, ammonia and
SO3/oleum service.
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["Reaction", "ReactionSystem", "Study", "__version__"]


def __getattr__(name):
    # Lazy imports keep `import teakit` fast; heavy modules load on first use.
    if name in ("Reaction", "ReactionSystem"):
        from teakit.chemistry import reaction

        return getattr(reaction, name)
    if name == "Study":
        from teakit.study.study import Study

        return Study
    raise AttributeError(f"module 'teakit' has no attribute {name!r}")
