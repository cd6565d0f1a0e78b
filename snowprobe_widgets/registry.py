"""Name-keyed registries of interchangeable models, extendable through entry points.

A registry maps a short name (``"looyenga"``, ``"ricker"``) to a factory. Other packages
add their own entries by declaring an entry point in the registry's group, for example in
their ``pyproject.toml``::

    [project.entry-points."snowprobe_widgets.materials"]
    "wet_snow:mylab" = "mylab_snow:measured_wet_snow"

The entry point's name becomes the key and the loaded object the factory. Entry points
are read once, the first time a name is looked up or the names are listed.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from importlib.metadata import entry_points
from typing import Any


class Registry:
    """A mapping from names to factories, filled by code and by entry points.

    Parameters
    ----------
    group : str
        Entry-point group read for plugin entries (for example
        ``"snowprobe_widgets.pulses"``).
    what : str
        Plain name of what the registry holds, used in error messages.
    """

    def __init__(self, group: str, what: str) -> None:
        self.group = group
        self.what = what
        self._items: dict[str, Callable[..., Any]] = {}
        self._plugins_loaded = False

    def register(
        self, name: str, factory: Callable[..., Any] | None = None, *, replace: bool = False
    ) -> Any:
        """Add ``factory`` under ``name``; usable as a decorator when ``factory`` is omitted.

        Raises
        ------
        ValueError
            If ``name`` is taken and ``replace`` is false.
        """
        if factory is None:
            def deco(f: Callable[..., Any]) -> Callable[..., Any]:
                self.register(name, f, replace=replace)
                return f

            return deco
        if not isinstance(name, str) or not name:
            raise ValueError(f"{self.what} name must be a non-empty string, got {name!r}")
        if name in self._items and not replace:
            raise ValueError(f"{self.what} {name!r} is already registered")
        self._items[name] = factory
        return factory

    def _load_plugins(self) -> None:
        if self._plugins_loaded:
            return
        self._plugins_loaded = True
        for ep in entry_points(group=self.group):
            if ep.name in self._items:
                continue
            try:
                self._items[ep.name] = ep.load()
            except Exception as exc:  # a broken plugin must not break the package
                import warnings

                warnings.warn(
                    f"could not load {self.what} plugin {ep.name!r} ({ep.value}): {exc}",
                    RuntimeWarning,
                    stacklevel=2,
                )

    def get(self, name: str) -> Callable[..., Any]:
        """Return the factory registered as ``name``.

        Raises
        ------
        ValueError
            If no such name exists; the message lists the known names.
        """
        if name not in self._items:
            self._load_plugins()
        try:
            return self._items[name]
        except KeyError:
            known = ", ".join(repr(n) for n in self.names())
            raise ValueError(f"unknown {self.what} {name!r}; known: {known}") from None

    def names(self, prefix: str = "") -> tuple[str, ...]:
        """Registered names (built-in and plugins), sorted, optionally filtered by prefix."""
        self._load_plugins()
        return tuple(sorted(n for n in self._items if n.startswith(prefix)))

    def __contains__(self, name: object) -> bool:
        self._load_plugins()
        return name in self._items

    def __iter__(self) -> Iterator[str]:
        return iter(self.names())
