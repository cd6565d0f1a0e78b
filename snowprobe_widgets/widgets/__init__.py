"""The widget layer: ipywidgets and bqplot views of the model's outputs (no physics here).

This is the only package that imports ipywidgets or bqplot; the model layer below it
never imports this package.
"""

from __future__ import annotations

from snowprobe_widgets.widgets.materials_lab import MaterialsExplorer
from snowprobe_widgets.widgets.palette_png import (
    COLOUR_MAP_KINDS,
    COLOUR_MAPS,
    colour_map,
    encode_palette_png,
    scale_to_index,
)
from snowprobe_widgets.widgets.radargram_view import RadargramView

__all__ = [
    "COLOUR_MAPS",
    "COLOUR_MAP_KINDS",
    "MaterialsExplorer",
    "RadargramView",
    "colour_map",
    "encode_palette_png",
    "scale_to_index",
]
