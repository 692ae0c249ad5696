"""Model of a probe QA log: phantom depth-of-penetration measurements (schema kind ``qa``).

Format (``schema_version: 1``): ``measurements``, a non-empty list of
``{probe, date, frequency_mhz, phantom_attenuation_db_per_cm_mhz, depth_of_penetration_cm}``
with optional ``phantom`` (model or label), ``operator``, ``settings`` (free text or a mapping
of the control settings used, recorded so later tests repeat them; Goodsitt1998) and
``note``. Optional ``department``, ``title`` and ``demo`` describe the file.

Depth of penetration is the depth at which the phantom's background speckle disappears into
noise at maximum output and gain (IEC61391; Goodsitt1998). The ranges are plausibility
bounds (common practice): phantoms are 0.3-1.0 dB/cm/MHz (IEC61391: 0.5 or 0.7), probes
1-20 MHz, penetration up to 30 cm (deeper than phantoms are built).
"""

from __future__ import annotations

import datetime
from typing import Annotated, Literal

from pydantic import AfterValidator, Field

from planner.files.base import FileModel, OptText, Text

__all__ = ["QaFile", "QaMeasurement"]


def _check_date(text: str) -> str:
    try:
        datetime.date.fromisoformat(text)
    except ValueError:
        raise ValueError(f"{text!r} is not a valid date (YYYY-MM-DD)") from None
    return text


IsoDate = Annotated[str, AfterValidator(_check_date),
                    Field(description="Date of the measurement (YYYY-MM-DD).",
                          json_schema_extra={"format": "date"})]
FrequencyMhz = Annotated[float, Field(ge=1, le=20, allow_inf_nan=False,
                                      description="Transmit (centre) frequency set. [MHz]")]
PhantomAttenuation = Annotated[float, Field(ge=0.3, le=1.0, allow_inf_nan=False,
                                            description="Phantom attenuation coefficient (IEC "
                                            "phantoms 0.5 or 0.7). [dB cm^-1 MHz^-1]")]
PenetrationCm = Annotated[float, Field(gt=0, le=30, allow_inf_nan=False,
                                       description="Depth where the background speckle "
                                       "disappears at maximum output and gain. [cm]")]
Settings = Annotated[str | dict[str, str | float | int | bool],
                     Field(description="Control settings used (text or a mapping).")]


class QaMeasurement(FileModel):
    """One phantom depth-of-penetration measurement of one probe."""

    probe: Text = Field(description="Probe id of the inventory.")
    date: IsoDate
    frequency_mhz: FrequencyMhz
    phantom_attenuation_db_per_cm_mhz: PhantomAttenuation
    depth_of_penetration_cm: PenetrationCm
    phantom: Text | None = Field(default=None, description="Phantom model or label.")
    operator: Text | None = None
    settings: Settings | None = None
    note: OptText = ""


class QaFile(FileModel):
    """A probe QA log."""

    schema_version: Literal[1] = Field(description="File format version; must be 1.")
    measurements: Annotated[list[QaMeasurement], Field(min_length=1)] = Field(
        description="The measurements, in any order.")
    department: Text | None = None
    title: Text | None = None
    demo: bool = Field(default=False, description="True for invented demonstration values.")
