"""A short glossary of the words the screens use, for tooltips and a page of its own."""

from __future__ import annotations

import html

#: Term -> one or two plain sentences.
GLOSSARY: dict[str, str] = {
    "dB": "Decibel: a ratio on a log scale. +10 dB is 10 times the power, +20 dB 100 times; "
          "+6 dB is about twice the amplitude, -3 dB half the power.",
    "dBm": "A power in decibels above one milliwatt: 0 dBm = 1 mW, 20 dBm = 100 mW, "
           "30 dBm = 1 W; -90 dBm is a billionth of a milliwatt.",
    "two-way time": "The time a pulse takes from the antenna down to a reflector and back up. "
                    "Radar pictures are drawn against it; in dry snow 1 m of depth is about "
                    "8 ns of two-way time.",
    "trace": "One recording of the echoes at one antenna position: amplitude against time.",
    "radargram": "Traces side by side along the survey line: position across, two-way time "
                 "(depth) down. A buried person shows as an arch (a hyperbola).",
    "hyperbola": "The arch a small buried object draws in a radargram as the antenna passes "
                 "over it: its echo comes later when the antenna is off to the side.",
    "clutter": "Echoes that are not the person: snow blocks, clods, thin layers and stones in "
               "the debris. A person is hard to see when the clutter is as strong as the echo.",
    "footprint": "The patch under the antenna that the radar sees at a depth. A person "
                 "farther from the survey line than the footprint reaches is missed.",
    "time window": "How long each trace records. It must last until the deepest echo of "
                   "interest comes back.",
    "trace spacing": "Distance between traces along the line. A hyperbola needs a trace "
                     "every quarter wavelength in the snow to be drawn without gaps.",
    "detection level": "How many dB an echo must stand above the noise and clutter to count "
                       "as seen. One level is used by the verdict and the automatic detector.",
    "permittivity": "How strongly a material slows a radar wave; water raises it a lot, which "
                    "is why wet snow slows and absorbs the wave.",
    "liquid water": "Water in the snow's pores, as a percentage of the volume: 0 % in cold "
                    "dry snow, a few percent in wet spring snow.",
    "link budget": "The radar equation as a sum: the power sent, minus the losses down and "
                   "back (spreading, surface, snow), plus the person's reflection, against the "
                   "noise. What is left is the echo-to-noise ratio.",
}


def glossary_html() -> str:
    """The glossary as an HTML definition list."""
    items = "".join(f"<dt><b>{html.escape(k)}</b></dt><dd style='margin:0 0 6px 16px'>"
                    f"{html.escape(v)}</dd>" for k, v in GLOSSARY.items())
    return f"<dl class='sp-glossary' style='max-width:60em'>{items}</dl>"


def tip(*terms: str) -> str:
    """The glossary entries of ``terms`` as one tooltip text."""
    return " ".join(f"{t}: {GLOSSARY[t]}" for t in terms)


__all__ = ["GLOSSARY", "glossary_html", "tip"]
