"""The cautions every screen, report and file of the package carries, written once."""

from __future__ import annotations

#: One-line form, for narrow places (plot titles, file headers).
CAUTION_SHORT: str = (
    "Planning and training aid on simplified physics: it does not replace avalanche "
    "transceivers, probes, trained rescuers or the local rescue authority's protocols."
)

#: Full form, for dashboards, reports and the README.
CAUTION_TEXT: str = (
    "This is a planning and training aid built on simplified physics. It does not replace "
    "avalanche transceivers, probes, trained rescuers or the protocols of the local rescue "
    "authority. Radar transmitters are subject to the local radio-spectrum regulations: "
    "check them before you transmit."
)

__all__ = ["CAUTION_SHORT", "CAUTION_TEXT"]
