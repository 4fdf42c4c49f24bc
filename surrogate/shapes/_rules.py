"""Fabrication rules as data: a name, a one-line description and a check.

A rule looks only at the validated parameter mapping, so every rule runs
before any lattice site is built (and before anything is solved).  A violated
rule yields one line in the package's message format, naming the parameter,
what is allowed, the rule and the value, e.g.
``"gap_nm must be >= 5 nm (rule minimum-gap); got 3.0"``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

__all__ = ["FabricationRule", "minimum_feature_rule", "minimum_gap_rule", "relation_rule"]


def _fmt(value):
    return repr(float(value))


@dataclass(frozen=True)
class FabricationRule:
    """One fabrication or consistency rule of a shape family.

    Attributes
    ----------
    name : str
        Short rule name, e.g. ``"minimum-gap"``; it appears in every message.
    description : str
        One line for listings, e.g. ``"gap_nm >= 5 nm (narrowest gap the lithography resolves)"``.
    parameters : tuple of str
        The parameters the rule reads.
    check : callable
        ``check(params) -> str | None``: the one-line violation message, or ``None``
        when the (validated) parameters satisfy the rule.
    """

    name: str
    description: str
    parameters: tuple
    check: Callable = field(repr=False, compare=False)

    def violation(self, params):
        """The violation message for ``params``, or ``None`` when the rule holds."""
        return self.check(params)


def minimum_feature_rule(names, minimum_nm):
    """Every dimension in ``names`` must be at least ``minimum_nm`` [nm].

    The minimum feature is the narrowest line the patterning process resolves
    (default 10 nm, common practice for electron-beam lithography of gold films,
    no source).
    """
    names = tuple(names)

    def check(params):
        for n in names:
            if params[n] < minimum_nm:
                return f"{n} must be >= {minimum_nm:g} nm (rule minimum-feature); got {_fmt(params[n])}"
        return None

    desc = f"{', '.join(names)} >= {minimum_nm:g} nm (narrowest feature the patterning resolves)"
    return FabricationRule("minimum-feature", desc, names, check)


def minimum_gap_rule(name, minimum_nm):
    """The gap ``name`` must be at least ``minimum_nm`` [nm] (default 5 nm, common practice, no source)."""

    def check(params):
        if params[name] < minimum_nm:
            return f"{name} must be >= {minimum_nm:g} nm (rule minimum-gap); got {_fmt(params[name])}"
        return None

    return FabricationRule("minimum-gap", f"{name} >= {minimum_nm:g} nm (narrowest gap the patterning resolves)", (name,), check)


def relation_rule(rule_name, subject, description, allowed, *, reads=()):
    """A rule bounding one parameter by a function of others.

    Parameters
    ----------
    rule_name : str
        E.g. ``"end-radius-fits-width"``.
    subject : str
        The parameter the message names.
    description : str
        One line for listings.
    allowed : callable
        ``allowed(params) -> (ok: bool, text: str)``; ``text`` says what is allowed,
        e.g. ``"<= width_nm / 2 = 15 nm"``.
    reads : tuple of str
        The other parameters involved.
    """

    def check(params):
        ok, text = allowed(params)
        if ok:
            return None
        return f"{subject} must be {text} (rule {rule_name}); got {_fmt(params[subject])}"

    return FabricationRule(rule_name, description, (subject, *reads), check)
