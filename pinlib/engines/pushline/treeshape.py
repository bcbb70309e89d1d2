"""A route seen from its driver: the tree's shape as an exact key, and the order of its
nodes in that shape (:func:`shape_from`).

Two drivers of one route see the same circuit when the tree seen from each is the same:
the same stretches (impedance, delay, capacitance) leading to the same capacitances in
the same branching, whatever the names of the points.  A star of equal branches and
equal pins is the common case: each peripheral driving from its own branch sees the
others as the same load.  Their edges are then one solve, its nodes taken in the order
of the shape (:func:`pinlib.engines.pushline.routes.tree_edges`).  The key compares
floats by value, so two shapes are equal only when every value is identical.
"""

from __future__ import annotations

from collections.abc import Sequence

__all__ = ["shape_from"]


def shape_from(sections, caps: Sequence[float], source: int) -> tuple[tuple, list[int]]:
    """The tree seen from node ``source``, and its nodes in the shape's order.

    Parameters
    ----------
    sections : sequence of (int, int, Stretch)
        The route's stretches between their two nodes
        (:attr:`pinlib.engines.pushline.routes.RouteNet.sections`). [1]
    caps : sequence of float
        Capacitance at each node. [F]
    source : int
        The driver's node. [1]

    Returns
    -------
    shape : tuple
        Nested: a node is ``(capacitance, branches)``, each branch ``((z0, td, c) of its
        stretch, the node it leads to)``, the branches in sorted order.  Equal shapes
        are the same circuit. [1]
    order : list of int
        The nodes in the shape's order (each node, then its branches' nodes in their
        sorted order): the ``i``-th node of two equal shapes sit at the same place. [1]

    Examples
    --------
    A star seen from either of two equal branches is the same shape; the nodes swap:

    >>> from types import SimpleNamespace as S
    >>> arm = S(z0=50.0, td=1e-10, c=2e-12)
    >>> star = [(0, 1, arm), (1, 2, arm), (1, 3, arm)]
    >>> a, order_a = shape_from(star, [3e-12, 0.0, 0.0, 4e-12], 2)
    >>> b, order_b = shape_from(star, [3e-12, 0.0, 4e-12, 0.0], 3)
    >>> a == b, order_a, order_b
    (True, [2, 1, 0, 3], [3, 1, 0, 2])
    """
    links: dict[int, list[tuple[int, tuple]]] = {i: [] for i in range(len(caps))}
    for a, b, s in sections:
        # a stretch without a delay is a capacitance: its z0 (NaN) is not used
        label = (float(s.z0) if s.td > 0 else 0.0, float(s.td), float(s.c))
        links[a].append((b, label))
        links[b].append((a, label))
    parent = {source: -1}
    walk = [source]
    for n in walk:  # breadth first: parents before their branches
        for m, _ in links[n]:
            if m not in parent:
                parent[m] = n
                walk.append(m)
    shape: dict[int, tuple] = {}
    branches: dict[int, list[int]] = {}
    for n in reversed(walk):  # branches before their parents
        kids = sorted(((label, shape[m], m) for m, label in links[n] if parent[m] == n),
                      key=lambda k: (k[0], k[1]))
        shape[n] = (float(caps[n]), tuple((label, sub) for label, sub, _ in kids))
        branches[n] = [m for *_, m in kids]
    order, todo = [], [source]
    while todo:  # depth first, each node's branches in their sorted order
        n = todo.pop()
        order.append(n)
        todo.extend(reversed(branches[n]))
    return shape[source], order
