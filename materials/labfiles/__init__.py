"""Lab data files: breakdown series, polarisation loops and flat value tables (CSV). Pure parsing, SI out.

Our own formats (DESIGN.md, "Lab files"). A file is UTF-8 text: an optional block of ``# key: value`` comment
lines at the top, one column-header row, then data rows. A column's unit goes in square brackets::

    # label: film-A 25C
    # thickness: 3.1 um
    # area: 1 cm^2
    # temperature: 25 degC
    field [V/um],censored
    642.0,0
    655.5,1

Breakdown series: ``field [UNIT]`` or ``voltage [UNIT]`` (with ``thickness [UNIT]`` per specimen, or one
thickness for the set), optional ``censored`` (0/1; 1 = the test stopped without breakdown), optional per-specimen
``thickness [UNIT]``; text columns ``specimen``, ``id`` and ``note`` are kept out of the numbers.
Loops: ``field [UNIT]`` and ``polarization [UNIT]`` (or ``polarisation``) in measured order; ``time``, ``index``
and ``point`` columns are ignored.
Endurance sets: ``time [UNIT]`` to failure (or to the end of the test for a censored unit), ``voltage [UNIT]`` or
``field [UNIT]``, optional ``temperature [UNIT]`` (°C allowed) and ``censored`` (0/1), one unit per row.

Header keys: ``label``, ``thickness``, ``area`` (breakdown only), ``temperature``, ``ramp`` (breakdown only),
``waveform`` (dc/ac, breakdown only), ``frequency`` (loops only), ``operator``, ``lab``, ``date`` (ISO 8601),
``kind`` (``lab``, or ``invented`` for demo data), ``citation`` and ``note``. A bare number in the header takes the
default unit of the matching CLI option (µm, cm², °C, V/s, Hz); options given on the command line win over the
header. A ``#`` line that is not ``# key: value`` (a single word before the colon) is a free comment.

Files are read line by line (large files are streamed) while their SHA-256 is computed. Every problem raises one
:class:`~materials.errors.InputError` naming the file, the line and the column.
"""

from materials.labfiles.breakdown import MIN_SPECIMENS, BreakdownFile, read_breakdown
from materials.labfiles.endurance import MIN_UNITS, EnduranceFile, read_endurance
from materials.labfiles.header import (BREAKDOWN_KEYS, ENDURANCE_KEYS, IMPORT_KINDS, LOOP_KEYS, WAVEFORMS, Conditions,
                                       parse_condition)
from materials.labfiles.loop import MAX_POLARIZATION_C_PER_M2, MIN_LOOP_POINTS, RETURN_FRACTION, LoopFile, read_loop
from materials.labfiles.source import BLOCK_BYTES, in_file
from materials.labfiles.values import read_value_table

__all__ = ["BLOCK_BYTES", "BREAKDOWN_KEYS", "ENDURANCE_KEYS", "MIN_UNITS", "EnduranceFile", "read_endurance",
           "IMPORT_KINDS", "LOOP_KEYS", "MAX_POLARIZATION_C_PER_M2", "MIN_LOOP_POINTS",
           "MIN_SPECIMENS", "RETURN_FRACTION", "WAVEFORMS", "BreakdownFile", "Conditions", "LoopFile", "in_file",
           "parse_condition", "read_breakdown", "read_loop", "read_value_table"]
