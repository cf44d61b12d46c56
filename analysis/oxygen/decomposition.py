"""Share a total change among factors by averaging over every order of applying them."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from itertools import permutations
from math import factorial


def shapley_parts(value: Callable[[frozenset[str]], float], factors: Sequence[str]) -> dict[str, float]:
    """Split ``value(all) - value(none)`` among ``factors`` (Shapley values).

    Each factor's part is its marginal effect ``value(S | {f}) - value(S)`` averaged over all
    orders in which the factors can be switched on. The parts always sum to the total, and a
    factor that changes nothing gets zero. With three factors that is six orders.

    Parameters
    ----------
    value : callable
        Value of the quantity when the factors in the given set are switched on.
    factors : sequence of str
        Factor names (distinct).

    References
    ----------
    Shapley LS (1953). A value for n-person games. Contributions to the Theory of Games II,
    Annals of Mathematics Studies 28:307-317.

    Examples
    --------
    >>> parts = shapley_parts(lambda s: len(s) ** 2, ["a", "b"])
    >>> parts == {"a": 2.0, "b": 2.0}
    True
    """
    names = list(factors)
    cache: dict[frozenset[str], float] = {}

    def v(subset: frozenset[str]) -> float:
        if subset not in cache:
            cache[subset] = float(value(subset))
        return cache[subset]

    parts = dict.fromkeys(names, 0.0)
    for order in permutations(names):
        on: frozenset[str] = frozenset()
        for name in order:
            nxt = on | {name}
            parts[name] += v(nxt) - v(on)
            on = nxt
    n_orders = factorial(len(names))
    return {name: total / n_orders for name, total in parts.items()}
