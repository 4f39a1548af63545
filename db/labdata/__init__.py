"""Lab data into the store: material records, breakdown sets, polarisation loops, and what is derived from them.

Everything here works inside the caller's session (one transaction per command: a failure rolls it all back).

- :func:`add_materials` writes material records (from ``holdoff add``) with update-with-history: a changed value
  retires the old row (kept, with when and why) and adds the new one.
- :func:`import_breakdown` stores a breakdown set and its raw points, then :func:`refit_set` stores the Weibull fit
  (scale as ``breakdown_field``, shape as ``weibull_shape``) as property values that reference the set, at the
  set's temperature, thickness and electrode area; sets at several temperatures so form the material's
  breakdown-versus-temperature curve.
- :func:`import_loop` stores a loop and its samples, and its recovered energy density and efficiency as property
  values that reference the loop, at its peak field, temperature and frequency.
- :func:`import_endurance` stores an endurance set (times to failure at constant stress) and its life-stress fit
  as ``life_exponent`` (and ``activation_energy``) values that reference the set.
- Every import gets its own source (kind ``lab``, or ``invented`` for demo data) naming who, where and when, the
  file name and its SHA-256; a file already imported is refused unless ``force``.
"""

from db.labdata.breakdown import import_breakdown, read_points, refit_set
from db.labdata.common import DEFAULT_CONFIDENCE, ImportResult, resolve_material, slugify
from db.labdata.describe import describe_sets
from db.labdata.endurance import fit_figures, fit_file, import_endurance
from db.labdata.loop import import_loop, read_loop_points
from db.labdata.records import add_materials, read_add_files, store_sources

__all__ = ["DEFAULT_CONFIDENCE", "ImportResult", "add_materials", "describe_sets", "fit_figures", "fit_file",
           "import_breakdown", "import_endurance", "import_loop",
           "read_add_files", "read_loop_points", "read_points", "refit_set", "resolve_material", "slugify",
           "store_sources"]
