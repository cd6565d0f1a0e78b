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

from snowprobe_widgets.widgets.detectability import DetectabilityView
from snowprobe_widgets.widgets.explorer import CachedSimulation, ScenarioExplorer
from snowprobe_widgets.widgets.materials_lab import MaterialsExplorer
from snowprobe_widgets.widgets.palette_png import (
    COLOUR_MAP_KINDS,
    COLOUR_MAPS,
    colour_map,
    encode_palette_png,
    scale_to_index,
)
from snowprobe_widgets.widgets.panels import (
    DebrisPanel,
    PersonPanel,
    RadarPanel,
    SnowpackEditor,
)
from snowprobe_widgets.widgets.plan import SearchPlanBoard
from snowprobe_widgets.widgets.processing_panel import ProcessingPanel
from snowprobe_widgets.widgets.radargram_view import RadargramView
from snowprobe_widgets.widgets.training import TrainingSession
from snowprobe_widgets.widgets.views import BudgetView, CrossSectionView, SpectrumView, TraceView

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
