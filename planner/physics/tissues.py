"""The tissue table: acoustic properties of tissues with their provenance.

Loaded once from ``planner/data/tissues.yaml``. Acoustic impedance is derived as
density x speed (status ``derived``).

References
----------
See the ``source`` of every value (keys of :data:`planner.references.REFERENCES`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache

from planner.datafiles import load_package_yaml
from planner.provenance import Sourced, sourced_from_mapping

TISSUE_KINDS: tuple[str, ...] = ("soft", "fluid", "bone", "gas")
_FIELDS: tuple[str, ...] = ("speed_m_per_s", "density_kg_per_m3",
                            "attenuation_db_per_cm_mhz", "attenuation_exponent")


@dataclass(frozen=True, slots=True)
class Tissue:
    """One row of the tissue table.

    Attributes
    ----------
    id : str
        Table key (``liver``, ``fat`` ...).
    speed_m_per_s : float
        Speed of sound. [m/s]
    density_kg_per_m3 : float
        Density. [kg/m^3]
    attenuation_db_per_cm_mhz : float
        Attenuation coefficient alpha0 at 1 MHz, one way. [dB cm^-1 MHz^-y]
    attenuation_exponent : float
        Power-law exponent y in alpha(f) = alpha0 * f**y. [-]
    provenance : dict
        Field name -> :class:`~planner.provenance.Sourced`.
    """

    id: str
    name: str
    kind: str
    speed_m_per_s: float
    density_kg_per_m3: float
    attenuation_db_per_cm_mhz: float
    attenuation_exponent: float
    provenance: dict[str, Sourced] = field(compare=False, repr=False)

    @property
    def impedance_mrayl(self) -> float:
        """Characteristic acoustic impedance rho * c (derived). [MRayl]"""
        return self.density_kg_per_m3 * self.speed_m_per_s * 1e-6


def _build(tissue_id: str, raw: dict) -> Tissue:
    prov = {name: sourced_from_mapping(raw.get(name), f"tissues.{tissue_id}.{name}")
            for name in _FIELDS}
    if raw.get("kind") not in TISSUE_KINDS:
        raise ValueError(f"tissues.{tissue_id}.kind must be one of {', '.join(TISSUE_KINDS)}")
    for name, value in prov.items():
        if not isinstance(value.value, (int, float)) or isinstance(value.value, bool) \
                or value.value <= 0:
            raise ValueError(f"tissues.{tissue_id}.{name} must be a positive number")
    return Tissue(id=tissue_id, name=str(raw["name"]), kind=raw["kind"],
                  provenance=prov, **{name: float(prov[name].value) for name in _FIELDS})


@lru_cache(maxsize=1)
def load_tissues() -> dict[str, Tissue]:
    """Return the tissue table ``{id: Tissue}`` (cached)."""
    data = load_package_yaml("tissues.yaml")
    return {tid: _build(tid, raw) for tid, raw in data["tissues"].items()}


def get_tissue(tissue_id: str) -> Tissue:
    """Return one tissue; ``ValueError`` lists the valid ids when it is unknown."""
    table = load_tissues()
    try:
        return table[tissue_id]
    except KeyError:
        raise ValueError(f"unknown tissue {tissue_id!r}; valid tissues: "
                         f"{', '.join(sorted(table))}") from None
