"""Lookup of registered solutes by name or alias: the registry's index, importable by every brine model.

The records themselves (:class:`induct.brine.registry.Solute`) and the built-in salts are defined
in :mod:`induct.brine.registry`, which registers them here when :mod:`induct.brine` is imported;
the models (:mod:`~induct.brine.freezing`, :mod:`~induct.brine.solutions`, :mod:`~induct.brine.limits`,
:mod:`~induct.brine.extrapolation`) look records up here, so that the registry can refer to the
models without an import cycle.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping

__all__ = ["SoluteRegistry", "SOLUTES", "get_solute"]


class SoluteRegistry(Mapping):
    """Read-only mapping name -> :class:`Solute`; iterating gives the canonical names in registration order.

    Item access and ``in`` accept aliases, case-insensitively. Use
    :func:`register_solute` / :func:`unregister_solute` to change it.

    Examples
    --------
    >>> from induct.brine.registry import SOLUTES
    >>> ", ".join(SOLUTES)
    'seawater, NaCl, MgSO4, KCl'
    >>> SOLUTES["nacl"].name, "KCL" in SOLUTES, "CaCl2" in SOLUTES
    ('NaCl', True, False)
    """

    def __init__(self):
        self._records = {}
        self._lookup = {}

    def __getitem__(self, name):
        key = name.lower() if isinstance(name, str) else None
        if key not in self._lookup:
            raise KeyError(name)
        return self._records[self._lookup[key]]

    def __iter__(self) -> Iterator[str]:
        return iter(self._records)

    def __len__(self) -> int:
        return len(self._records)

    def __repr__(self) -> str:
        return f"SoluteRegistry({', '.join(self._records)})"

    def _add(self, solute) -> None:
        if not hasattr(solute, "lookup_names") or not hasattr(solute, "problems"):
            raise TypeError(f"register a Solute record, got {type(solute).__name__}")
        problems = solute.problems()
        if problems:
            raise ValueError(f"solute {solute.name!r} is inconsistent: " + "; ".join(problems))
        clash = [n for n in solute.lookup_names if n in self._lookup]
        if clash:
            raise ValueError(f"solute {solute.name!r}: name or alias {clash[0]!r} is already registered "
                             f"(for {self._lookup[clash[0]]!r})")
        self._records[solute.name] = solute
        for n in solute.lookup_names:
            self._lookup[n] = solute.name

    def _remove(self, name: str):
        solute = self[name]
        del self._records[solute.name]
        for n in solute.lookup_names:
            del self._lookup[n]
        return solute


#: All registered solutes (mapping name -> :class:`Solute`; iterates over the names).
SOLUTES = SoluteRegistry()


def get_solute(name):
    """The registry record of a solute, by name or alias (case-insensitive).

    Parameters
    ----------
    name : str or Solute
        A registered name or alias, e.g. ``"NaCl"``, ``"nacl"``, ``"sodium chloride"``;
        a :class:`Solute` record is returned unchanged (registered or not).

    Returns
    -------
    Solute

    Raises
    ------
    ValueError
        Unknown name; the message lists the registered names.

    Examples
    --------
    >>> from induct.brine.registry import get_solute
    >>> get_solute("nacl").name
    'NaCl'
    >>> get_solute("Sea Water").salinity.label
    'SP'
    >>> get_solute("CaCl2")
    Traceback (most recent call last):
    ...
    ValueError: solute must be one of seawater, NaCl, MgSO4, KCl; got 'CaCl2'
    """
    if not isinstance(name, str) and hasattr(name, "lookup_names"):
        return name
    try:
        return SOLUTES[name]
    except KeyError:
        raise ValueError(f"solute must be one of {', '.join(SOLUTES)}; got {name!r}") from None


