"""Formula functions: one pure, vectorised function per equation, table or practice rule.

Every public function here takes numpy arrays (or scalars) and returns numpy arrays of the
broadcast shape; none branches on values (``np.where`` / ``np.minimum`` only), so the same
function serves a scalar unit test and a 100,000-row schedule.

Conventions (see DEVELOPERS.md): lengths mm, areas mm², forces N, moments N·mm, stresses MPa,
angles degrees unless a function says otherwise. Nationally determined parameters are keyword
arguments whose docstring gives the recommended value; nothing is held in module globals.

The first docstring line of each function is its citation, in one format::

    EN 1992-1-1:2004 6.2.2(1), Eq. (6.2.a)
    EN 1992-1-1:2004 3.1.2, Table 3.1
    Common practice: <the practice and where it is published>
    Derived: <what it is derived from>

Provenance flags follow the engineering reference: [M] from memory of the standard (confirm
against a licensed copy), [CP] common practice, [D] derived here, [V] verified in a retrieved text.
"""

from checker.calcs import (  # noqa: F401
    anchorage,
    cracking,
    detailing,
    materials,
    punching,
    reactions,
    shear,
    splitting,
    strut_tie,
)

MODULES = (materials, reactions, strut_tie, shear, punching, anchorage, detailing, splitting, cracking)

__all__ = [
    "MODULES",
    "anchorage",
    "cracking",
    "detailing",
    "materials",
    "punching",
    "reactions",
    "shear",
    "splitting",
    "strut_tie",
]
