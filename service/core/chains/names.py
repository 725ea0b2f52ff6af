"""Names of the chain network's nodes and elements, shared by the general network and the sweep's record."""

from __future__ import annotations


def outlet_node(k: int) -> str:
    """Node of lead k's outlet (k = -1 is the origin socket)."""
    return f"L{k + 1}"


def lead_id(k: int) -> str:
    return f"lead{k}"


def appliance_id(j: int) -> str:
    return f"appliance{j}"
