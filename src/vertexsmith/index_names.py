"""Names of a leg's group indices (a3, i1, i1_color): one rule for vertices and propagators."""

from __future__ import annotations


def qualify_group_indices(representations: tuple[tuple[str, str, int], ...]) -> bool:
    """Group index names carry their group when a leg has indices of several groups (spaces not counted)."""
    return sum(rep != "flavour" for _, rep, _ in representations) > 1


def group_index_name(position: int, group: str, representation: str, qualify: bool) -> str:
    """a3 for an adjoint index of leg 3, i3 for a fundamental one; with several groups a3_color.

    An index of an index space is named after the space: gen3.
    """
    if representation == "flavour":
        return f"{group}{position}"
    letter = "a" if representation == "adjoint" else "i"
    return f"{letter}{position}_{group}" if qualify else f"{letter}{position}"


__all__ = ["group_index_name", "qualify_group_indices"]
