"""The tissue table: acoustic properties of tissues with their provenance.

Loaded once from ``planner/data/tissues.yaml``. Acoustic impedance is derived as
density x speed (status ``derived``). The file's ``aliases`` map the names a practitioner
types (``muscle``, ``bone``) to canonical ids (``muscle_across``, ``cortical_bone``);
:func:`get_tissue` and :func:`resolve_tissue_id` accept both, the table keeps the ids.

References
----------
See the ``source`` of every value (keys of :data:`planner.references.REFERENCES`).
"""

from __future__ import annotations

from dataclasses import field
from functools import lru_cache

from planner.datafiles import load_package_yaml
from planner.provenance import Sourced, sourced_from_mapping
from planner.records import record

TISSUE_KINDS: tuple[str, ...] = ("soft", "fluid", "bone", "gas")
_FIELDS: tuple[str, ...] = ("speed_m_per_s", "density_kg_per_m3",
                            "attenuation_db_per_cm_mhz", "attenuation_exponent")


@record
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
def _load() -> tuple[dict[str, Tissue], dict[str, str]]:
    data = load_package_yaml("tissues.yaml")
    table = {tid: _build(tid, raw) for tid, raw in data["tissues"].items()}
    aliases = {str(name): str(target) for name, target in (data.get("aliases") or {}).items()}
    for name, target in aliases.items():
        if name in table:
            raise ValueError(f"tissues.aliases.{name} shadows the tissue id {name!r}")
        if target not in table:
            raise ValueError(f"tissues.aliases.{name} names the unknown tissue {target!r}")
    return table, aliases


def load_tissues() -> dict[str, Tissue]:
    """Return the tissue table ``{id: Tissue}`` keyed by canonical id (cached)."""
    return _load()[0]


def tissue_aliases() -> dict[str, str]:
    """Return ``{alias: canonical id}`` (``muscle`` -> ``muscle_across``, ...)."""
    return dict(_load()[1])


def resolve_tissue_id(name: str) -> str:
    """Return the canonical id for a tissue id or alias (case and surrounding space ignored);
    ``ValueError`` lists the valid names when it is unknown."""
    table, aliases = _load()
    key = name.strip().lower() if isinstance(name, str) else name
    if key in table:
        return key
    if key in aliases:
        return aliases[key]
    raise ValueError(f"unknown tissue {name!r}; valid tissues: {', '.join(sorted(table))} "
                     f"(aliases: {', '.join(f'{a}={t}' for a, t in sorted(aliases.items()))})")


def get_tissue(tissue_id: str) -> Tissue:
    """Return one tissue by id or alias; ``ValueError`` lists the valid names when unknown."""
    return load_tissues()[resolve_tissue_id(tissue_id)]
