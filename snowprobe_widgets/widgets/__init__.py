"""The widget layer: ipywidgets and bqplot views of the model's outputs (no physics here).

This is the only package that imports ipywidgets or bqplot; the model layer below it
never imports this package.

Apps: :class:`ScenarioExplorer` (everything around one scenario),
:class:`MaterialsExplorer`, :class:`TrainingSession` (blind radargram exercises),
:class:`DetectabilityView` (detection probability from Monte Carlo sweeps) and
:class:`SearchPlanBoard` (the search plan); their pieces (control panels, views) are
importable too.
"""

from __future__ import annotations

import importlib
from typing import Any

#: Where each public name lives. The names are imported on first use (PEP 562), so a
#: dashboard kernel loads only the app it shows: every kernel of a served page pays for
#: its imports in start-up time and memory (tests/benchmarks/bench_crowd.py).
_HOME: dict[str, str] = {
    "DetectabilityView": "detectability",
    "CachedSimulation": "explorer",
    "ScenarioExplorer": "explorer",
    "MaterialsExplorer": "materials_lab",
    "COLOUR_MAP_KINDS": "palette_png",
    "COLOUR_MAPS": "palette_png",
    "colour_map": "palette_png",
    "encode_palette_png": "palette_png",
    "scale_to_index": "palette_png",
    "DebrisPanel": "panels",
    "PersonPanel": "panels",
    "RadarPanel": "panels",
    "SnowpackEditor": "panels",
    "SearchPlanBoard": "plan",
    "ProcessingPanel": "processing_panel",
    "RadargramView": "radargram_view",
    "TrainingSession": "training",
    "BudgetView": "views",
    "CrossSectionView": "views",
    "SpectrumView": "views",
    "TraceView": "views",
}


def __getattr__(name: str) -> Any:
    """Import a public name's module on first use."""
    if name not in _HOME:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(f"{__name__}.{_HOME[name]}"), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_HOME))


__all__ = [
    "COLOUR_MAPS",
    "COLOUR_MAP_KINDS",
    "BudgetView",
    "CachedSimulation",
    "CrossSectionView",
    "DebrisPanel",
    "DetectabilityView",
    "MaterialsExplorer",
    "PersonPanel",
    "ProcessingPanel",
    "RadarPanel",
    "RadargramView",
    "ScenarioExplorer",
    "SearchPlanBoard",
    "SnowpackEditor",
    "SpectrumView",
    "TraceView",
    "TrainingSession",
    "colour_map",
    "encode_palette_png",
    "scale_to_index",
]
