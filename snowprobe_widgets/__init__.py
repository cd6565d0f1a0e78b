"""snowprobe_widgets: radar-search planning and training for avalanche burials.

The model layer (materials, layered media, pulses, traces, scenes, processing) is pure
numpy/scipy and imports no user-interface library; the widget layer lives in
``snowprobe_widgets.widgets``.
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__"]


def simulate(scenario, **options):  # noqa: ANN001, ANN201 - thin re-export
    """Synthesise the radargram of a scenario: see :func:`snowprobe_widgets.synthesis.simulate`."""
    from .synthesis import simulate as _simulate

    return _simulate(scenario, **options)


def link_budget(scenario, target=None, **options):  # noqa: ANN001, ANN201 - thin re-export
    """The link budget of a burial: see :func:`snowprobe_widgets.budget.link_budget`."""
    from .budget import link_budget as _link_budget

    return _link_budget(scenario, target, **options)


def link_budgets(scenario, **options):  # noqa: ANN001, ANN201 - thin re-export
    """One link budget per buried person, in order: see
    :func:`snowprobe_widgets.budget_checks.link_budgets`."""
    from .budget_checks import link_budgets as _link_budgets

    return _link_budgets(scenario, **options)


def detect(radargram, **options):  # noqa: ANN001, ANN201 - thin re-export
    """Probable burials in a radargram: see :func:`snowprobe_widgets.detection.detect`."""
    from .detection import detect as _detect

    return _detect(radargram, **options)


def sweep(base, vary, *, uncertain=None, realizations=50, seed=0, executor=None,  # noqa: ANN001, ANN201
          **options):
    """Monte Carlo detection probability over a grid: see
    :func:`snowprobe_widgets.sweeps.sweep`."""
    from .sweeps import sweep as _sweep

    return _sweep(base, vary, uncertain=uncertain, realizations=realizations, seed=seed,
                  executor=executor, **options)
