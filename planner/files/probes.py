"""Model of a probe inventory file (a department's, or the shipped default).

Format (``schema_version: 1``): ``probes``, a non-empty list of probes with ``id``,
``label``, ``type`` (a probe family of ``planner/data/vocabulary.yaml``), ``band_mhz:
[low, high]`` [MHz], ``aperture_mm`` (active aperture in the scan plane) [mm],
``elevation_aperture_mm`` [mm], ``elevation_focus_cm`` [cm], ``footprint_mm: [length,
width]`` [mm], ``receive_f_number`` [-], ``pulse_cycles`` [-], ``harmonic`` and, optionally,
``bandwidth_fraction`` [-] (fractional -6 dB pulse-echo bandwidth; default 0.6). Optional
``department``, ``title`` and ``source`` ({source, status, note}) describe the file; optional
``qa_log`` names the probes' phantom QA log (kind ``qa``, relative to the inventory).
The ranges are plausibility bounds (common practice), not limits of any product.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Annotated, Literal, TypeAlias

from pydantic import Field, field_validator

from planner.datafiles import vocabulary
from planner.files.base import FileModel, OptText, Positive, SourceKey, Status, Text

__all__ = ["ProbeEntry", "InventoryFile", "InventorySource"]

if TYPE_CHECKING:      # the ids come from planner/data/vocabulary.yaml at run time
    ProbeType: TypeAlias = str
else:
    ProbeType = Literal[vocabulary()["probe_types"]]


ApertureMm = Annotated[float, Field(ge=1, le=200, allow_inf_nan=False,
                                    description="Active aperture in the scan plane. [mm]")]
ElevationApertureMm = Annotated[float, Field(ge=0.5, le=50, allow_inf_nan=False,
                                             description="Elevation aperture. [mm]")]
ElevationFocusCm = Annotated[float, Field(ge=0.2, le=30, allow_inf_nan=False,
                                          description="Fixed elevation (lens) focus. [cm]")]
ReceiveFNumber = Annotated[float, Field(ge=0.5, le=10, allow_inf_nan=False,
                                        description="Receive F-number. [-]")]
BandwidthFraction = Annotated[float, Field(ge=0.05, le=1.5, allow_inf_nan=False,
                                           description="Fractional -6 dB bandwidth of the "
                                           "pulse-echo spectrum (default 0.6). [-]")]
PulseCycles = Annotated[float, Field(ge=0.5, le=20, allow_inf_nan=False,
                                     description="Cycles in the transmitted pulse. [-]")]


class ProbeEntry(FileModel):
    """One transducer of the inventory (units in the names)."""

    id: Text = Field(description="Probe id, unique in the inventory.")
    label: Text = Field(description="Generic description shown in plans.")
    type: ProbeType = Field(description="Probe family.")
    band_mhz: Annotated[list[Positive], Field(min_length=2, max_length=2)] = Field(
        description="Usable band [low, high]. [MHz]")
    aperture_mm: ApertureMm
    elevation_aperture_mm: ElevationApertureMm
    elevation_focus_cm: ElevationFocusCm
    footprint_mm: Annotated[list[Positive], Field(min_length=2, max_length=2)] = Field(
        description="Footprint [length, width]. [mm]")
    receive_f_number: ReceiveFNumber
    pulse_cycles: PulseCycles
    harmonic: bool = Field(description="Can receive the second harmonic.")
    bandwidth_fraction: BandwidthFraction | None = None

    @field_validator("band_mhz")
    @classmethod
    def _increasing(cls, band: list[float]) -> list[float]:
        if not band[0] < band[1]:
            raise ValueError(f"band_mhz must be increasing, got [{band[0]:g}, {band[1]:g}]")
        return band


class InventorySource(FileModel):
    """Where the inventory's values come from."""

    source: SourceKey
    status: Status
    note: OptText = ""


class InventoryFile(FileModel):
    """A probe inventory file."""

    schema_version: Literal[1] = Field(description="File format version; must be 1.")
    probes: Annotated[list[ProbeEntry], Field(min_length=1)] = Field(
        description="The probes, in order of preference.")
    department: Text | None = None
    title: Text | None = None
    source: InventorySource | None = None
    qa_log: Text | None = Field(default=None, description="The department's QA log of these "
                                "probes (schema kind qa), relative to this file.")

    def duplicate_ids(self) -> list[tuple[int, str]]:
        """``(index, id)`` of every probe whose id was already used earlier in the list."""
        seen: set[str] = set()
        out = []
        for index, probe in enumerate(self.probes):
            if probe.id in seen:
                out.append((index, probe.id))
            seen.add(probe.id)
        return out
