"""The target a shortlist ranks against: from command options or a TOML file of our own form.

Target file form (every quantity a number with a unit; bare numbers take the CLI defaults)::

    [target]
    name = "DC-link bank, 800 V traction inverter"   # free text
    voltage = "800 V"
    tmin = "-40 degC"
    tmax = "125 degC"
    energy = "50 J"                 # total energy …
    # energy_density = "1 J/cm^3"  # … or a required design energy density (or both)
    frequency = "10 kHz"            # for the loss tangent (default 1 kHz)
    max_loss_tangent = 0.002
    failure_probability = 0.001     # accepted short-term failure probability of the part
    margin = 1.2                    # design field = Weibull quantile / margin
    area = "0.5 m^2"                # active area; derived per material from the energy when absent
    segment_area = "4 cm^2"         # self-healing films with segmented electrodes: the weakest-link area is one
                                    # segment (a breakdown clears or disconnects only it); failure probability is
                                    # then per segment
    families = ["polymer-film", "ceramic-class-1"]
    thicknesses = ["2.5 um", "3 um", "4 um"]   # optional design space of layer thicknesses
    # capacitance = "500 uF"       # … or a capacitance: sized as the energy ½·C·V² at the voltage
    # Service conditions (all optional): the part is designed at its hot spot and for its life.
    ripple = [["30 A", "100 Hz"], ["20 A", "10 kHz"]]   # rms current and frequency of each harmonic
    # ripple_current = "50 A"      # … or one harmonic: ripple_current with ripple_frequency
    # ripple_frequency = "10 kHz"
    series_resistance = "2 mohm"    # electrode and contact resistance (the metal part of the ESR)
    thermal_resistance = "4 K/W"    # hot spot to ambient
    ambient = "85 degC"             # within tmin…tmax; default tmax
    life = "100000 h"               # service life …
    life_fraction = 0.01            # … by which at most this fraction of parts may fail
    packing_factor = 0.5            # dielectric volume over the part's: the device-level energy density beside
    strict = false                  # true: refuse the stated Weibull-shape and test-area priors where data lack them
    extrapolate = false             # true: use a value outside its data's temperatures or thickness (held, flagged)
    max_sections = 1                # a layer thicker than can be made may be built as up to N series sections

    [weights]                       # criterion = weight (see ranking.criteria.CRITERIA)
    energy = 3
    loss = 1

    [[stack]]                       # optional layered candidates (layers in series, µm unless a unit is given)
    name = "film + impregnant"
    layers = ["polypropylene-bopp:10um", "mineral-transformer-oil:5um"]
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path

from materials.errors import InputError, UnitError
from materials.properties import FAMILIES
from materials.units import parse_option


@dataclass(frozen=True)
class Target:
    voltage_V: float
    tmin_K: float
    tmax_K: float
    energy_J: float | None = None
    energy_density_J_per_m3: float | None = None
    frequency_Hz: float | None = None
    max_loss_tangent: float | None = None
    failure_probability: float = 0.01
    margin: float = 1.0
    area_m2: float | None = None
    segment_area_m2: float | None = None
    families: tuple[str, ...] = ()
    thicknesses_m: tuple[float, ...] = ()
    weights: dict = field(default_factory=dict)
    assume_defaults: bool = True    # a missing Weibull shape or test area takes its family's stated prior range
    strict: bool = False            # refuse assumptions instead (assume_defaults is then False)
    extrapolate: bool = False       # use values outside their data (held at the end, flagged) instead of refusing
    max_sections: int = 1           # series sections allowed where one layer cannot be made thick enough
    name: str = ""
    stacks: tuple = ()              # layered candidates: (name, ((material key, thickness m), ...)), ...
    capacitance_F: float | None = None
    ripple: tuple[tuple[float, float], ...] = ()   # (A rms, Hz) per harmonic
    series_resistance_ohm: float = 0.0
    thermal_resistance_K_per_W: float | None = None
    ambient_K: float | None = None
    life_s: float | None = None
    life_fraction: float = 0.01
    packing_factor: float | None = None   # dielectric volume over the part's volume (device energy density)
    #: the energy was derived from the capacitance (½·C·V²)
    energy_from_capacitance: bool = False

    def __post_init__(self):
        if self.strict:
            object.__setattr__(self, "assume_defaults", False)
            if self.extrapolate:
                raise InputError("strict and extrapolate contradict each other: choose one")
        from ranking.design import MAX_SECTIONS

        if isinstance(self.max_sections, bool) or not isinstance(self.max_sections, int) \
                or not 1 <= self.max_sections <= MAX_SECTIONS:
            raise InputError(f"max_sections must be a whole number from 1 to {MAX_SECTIONS}")
        if not self.voltage_V > 0:
            raise InputError("voltage must be positive")
        if self.tmin_K > self.tmax_K:
            raise InputError("tmin is above tmax")
        if not 0 < self.failure_probability < 1:
            raise InputError("failure probability must lie between 0 and 1")
        if not self.margin >= 1.0:
            raise InputError("margin must be 1 or more (it divides the design field)")
        for f in self.families:
            if f not in FAMILIES:
                raise InputError(f"family '{f}' is not one of {', '.join(FAMILIES)}")
        if self.segment_area_m2 is not None and not self.segment_area_m2 > 0:
            raise InputError("segment area must be positive")
        if self.energy_J is not None and not self.energy_J > 0:
            raise InputError("energy must be positive")
        if self.energy_density_J_per_m3 is not None and not self.energy_density_J_per_m3 > 0:
            raise InputError("energy density must be positive")
        self._check_service()

    def _check_service(self) -> None:
        """Capacitance, ripple, thermal path and life: each one checked, and what it needs present."""
        if self.capacitance_F is not None:
            if not self.capacitance_F > 0:
                raise InputError("capacitance must be positive")
            if self.energy_J is not None and not self.energy_from_capacitance:
                raise InputError("give either an energy or a capacitance, not both")
            object.__setattr__(self, "energy_J", 0.5 * self.capacitance_F * self.voltage_V ** 2)
            object.__setattr__(self, "energy_from_capacitance", True)
        for i, f in self.ripple:
            if not (i >= 0 and f > 0):
                raise InputError("ripple current must not be negative and its frequency must be positive")
        if not self.series_resistance_ohm >= 0:
            raise InputError("series resistance must not be negative")
        if self.thermal_resistance_K_per_W is not None and not self.thermal_resistance_K_per_W > 0:
            raise InputError("thermal resistance must be positive")
        if self.ripple:
            if self.energy_J is None:
                raise InputError("a ripple current heats a part of known capacitance: give a capacitance or an energy")
            if self.thermal_resistance_K_per_W is None:
                raise InputError("a ripple current needs the thermal resistance hot spot to ambient")
        if self.ambient_K is not None and not self.tmin_K <= self.ambient_K <= self.tmax_K:
            raise InputError("ambient must lie within tmin…tmax")
        if self.life_s is not None and not self.life_s > 0:
            raise InputError("service life must be positive")
        if not 0 < self.life_fraction < 1:
            raise InputError("life failure fraction must lie between 0 and 1")
        if self.packing_factor is not None and not 0 < self.packing_factor <= 1:
            raise InputError("packing factor must lie in (0, 1]")

    @property
    def capacitance_or_energy_F(self) -> float | None:
        """The capacitance the part is sized for: the target's, else ``2·W/V²`` (linear dielectric)."""
        if self.capacitance_F is not None:
            return self.capacitance_F
        return None if self.energy_J is None else 2.0 * self.energy_J / self.voltage_V ** 2

    @property
    def ambient_or_tmax_K(self) -> float:
        """Ambient of the thermal path: the stated one, else the top of the temperature range."""
        return self.tmax_K if self.ambient_K is None else self.ambient_K

    @property
    def service(self) -> bool:
        """Whether the target states ripple heating or a service life."""
        return bool(self.ripple) or self.life_s is not None

    def to_dict(self) -> dict:
        return {"name": self.name, "voltage_V": self.voltage_V, "tmin_K": self.tmin_K, "tmax_K": self.tmax_K,
                "energy_J": self.energy_J, "energy_density_J_per_m3": self.energy_density_J_per_m3,
                "frequency_Hz": self.frequency_Hz, "max_loss_tangent": self.max_loss_tangent,
                "failure_probability": self.failure_probability, "margin": self.margin, "area_m2": self.area_m2,
                "segment_area_m2": self.segment_area_m2, "families": list(self.families),
                "thicknesses_m": list(self.thicknesses_m),
                "weights": dict(self.weights), "assume_defaults": self.assume_defaults, "strict": self.strict,
                "extrapolate": self.extrapolate, "max_sections": self.max_sections,
                "capacitance_F": self.capacitance_F,
                "ripple": [{"current_A": i, "frequency_Hz": f} for i, f in self.ripple],
                "series_resistance_ohm": self.series_resistance_ohm,
                "thermal_resistance_K_per_W": self.thermal_resistance_K_per_W, "ambient_K": self.ambient_K,
                "life_s": self.life_s, "life_fraction": self.life_fraction, "packing_factor": self.packing_factor}


def parse_weights(text: str | None) -> dict:
    """``"energy=3,loss=1"`` → {"energy": 3.0, "loss": 1.0}; names checked against the criteria."""
    from ranking.criteria import CRITERIA

    out = {}
    if not text:
        return out
    for part in text.split(","):
        if not part.strip():
            continue
        if "=" not in part:
            raise InputError(f"--weights: '{part.strip()}' is not name=weight")
        name, _, w = part.partition("=")
        name = name.strip()
        if name not in CRITERIA:
            raise InputError(f"--weights: unknown criterion '{name}' (one of {', '.join(CRITERIA)})")
        try:
            out[name] = float(w)
        except ValueError:
            raise InputError(f"--weights: '{w.strip()}' is not a number") from None
        if out[name] < 0:
            raise InputError(f"--weights: weight of '{name}' is negative")
    return out


def parse_thicknesses(text) -> tuple[float, ...]:
    """``"2.5,3,4,6um"`` (a trailing unit applies to bare numbers before it) → metres."""
    if not text:
        return ()
    items = text if isinstance(text, (list, tuple)) else [t for t in str(text).split(",") if t.strip()]
    import re

    last_unit = None
    for t in reversed(items):
        m = re.match(r"^\s*[-+0-9.eE]+\s*([^\s0-9].*)$", str(t))
        if m:
            last_unit = m.group(1)
            break
    out = []
    for t in items:
        t = str(t).strip()
        if last_unit and re.fullmatch(r"[-+0-9.eE]+", t):
            t = f"{t} {last_unit}"
        v = parse_option(t, "thickness", name="thickness")
        if not v > 0:
            raise InputError(f"thickness '{t}' must be positive")
        out.append(v)
    return tuple(sorted(set(out)))


# The quantities of a target: file key (and option name), the Target field it fills, the unit kind it is read as.
_QUANTITIES = (("voltage", "voltage_V", "voltage"), ("tmin", "tmin_K", "temperature"),
               ("tmax", "tmax_K", "temperature"), ("energy", "energy_J", "energy"),
               ("energy_density", "energy_density_J_per_m3", "energy_density"),
               ("frequency", "frequency_Hz", "frequency"), ("area", "area_m2", "capacitor_area"),
               ("segment_area", "segment_area_m2", "electrode_area"), ("capacitance", "capacitance_F", "capacitance"),
               ("series_resistance", "series_resistance_ohm", "resistance"),
               ("thermal_resistance", "thermal_resistance_K_per_W", "thermal_resistance"),
               ("ambient", "ambient_K", "temperature"), ("life", "life_s", "time"))


def _option(key: str) -> str:
    """The command option of a file key: ``energy_density`` → ``--energy-density``."""
    return "--" + key.replace("_", "-")


def _quantities(given: dict, *, options: bool) -> dict:
    """The quantities among ``given`` (by file key) as SI Target fields; errors name the option if ``options``."""
    return {attr: parse_option(given[key], kind, name=_option(key) if options else None)
            for key, attr, kind in _QUANTITIES if key in given}


_FILE_KEYS = {"name", "voltage", "tmin", "tmax", "energy", "energy_density", "frequency", "max_loss_tangent",
              "failure_probability", "margin", "area", "segment_area", "families", "thicknesses", "assume_defaults",
              "strict", "extrapolate", "max_sections", "capacitance", "ripple", "ripple_current", "ripple_frequency",
              "series_resistance", "thermal_resistance", "ambient", "life", "life_fraction", "packing_factor"}


def parse_ripple(spectrum=None, *, current=None, frequency=None, options: bool = True) -> tuple:
    """A ripple spectrum as ((A rms, Hz), …): from a list of [current, frequency] pairs (a target file), from
    ``"30A@100Hz,20A@10kHz"`` (an option), or from one current and one frequency. Bare numbers: A and Hz."""
    name = "--ripple" if options else "ripple"
    if spectrum is not None and (current is not None or frequency is not None):
        raise InputError(f"give {name} or a ripple current with its frequency, not both")
    if spectrum is None:
        if current is None:
            if frequency is not None:
                raise InputError("a ripple frequency needs a ripple current")
            return ()
        if frequency is None:
            raise InputError("a ripple current needs its frequency")
        pairs = [(current, frequency)]
    elif isinstance(spectrum, str):
        pairs = []
        for part in (p for p in spectrum.split(",") if p.strip()):
            if "@" not in part:
                raise InputError(f"{name}: '{part.strip()}' is not CURRENT@FREQUENCY (e.g. 20A@10kHz)")
            pairs.append(tuple(part.split("@", 1)))
    else:
        pairs = list(spectrum)
        if not all(isinstance(p, (list, tuple)) and len(p) == 2 for p in pairs):
            raise InputError(f"{name}: give [current, frequency] pairs, e.g. [[\"30 A\", \"100 Hz\"]]")
    out = tuple((parse_option(i, "current", name=name), parse_option(f, "frequency", name=name)) for i, f in pairs)
    if not out:
        raise InputError(f"{name}: no harmonics given")
    return out


def _flag(table: dict, key: str, default: bool) -> bool:
    """A yes/no field of a target file: a TOML boolean, never a string or a number read as one."""
    v = table.get(key, default)
    if not isinstance(v, bool):
        raise TypeError(f"'{key}' must be true or false, not {v!r}")
    return v


def _whole(table: dict, key: str, default: int) -> int:
    """A whole-number field of a target file: a TOML integer, never a string, a float or a boolean."""
    v = table.get(key, default)
    if isinstance(v, bool) or not isinstance(v, int):
        raise TypeError(f"'{key}' must be a whole number, not {v!r}")
    return v


def load_target(path: Path) -> Target:
    """Read a target TOML file (see the module docstring); errors name the file and field."""
    from materials.textfile import load_text

    path = Path(path)
    data = load_text(path, tomllib.loads, kind="TOML")
    t = data.get("target", {})
    unknown = set(t) - _FILE_KEYS
    if unknown:
        raise InputError(f"unknown field '{sorted(unknown)[0]}'", file=str(path), field=sorted(unknown)[0])
    for required in ("voltage", "tmin", "tmax"):
        if required not in t:
            raise InputError("missing", file=str(path), field=required)
    try:
        kw = dict(
            **_quantities(t, options=False),
            max_loss_tangent=float(t["max_loss_tangent"]) if "max_loss_tangent" in t else None,
            failure_probability=float(t.get("failure_probability", 0.01)), margin=float(t.get("margin", 1.0)),
            families=tuple(t.get("families", ())), thicknesses_m=parse_thicknesses(t.get("thicknesses")),
            assume_defaults=_flag(t, "assume_defaults", True), strict=_flag(t, "strict", False),
            extrapolate=_flag(t, "extrapolate", False), max_sections=_whole(t, "max_sections", 1),
            name=str(t.get("name", "")),
            ripple=parse_ripple(t.get("ripple"), current=t.get("ripple_current"), frequency=t.get("ripple_frequency"),
                                options=False),
            life_fraction=float(t.get("life_fraction", 0.01)),
            packing_factor=float(t["packing_factor"]) if "packing_factor" in t else None,
        )
    except UnitError as exc:
        raise InputError(str(exc), file=str(path)) from None
    except (TypeError, ValueError) as exc:
        raise InputError(f"bad value: {exc}", file=str(path)) from None
    weights = {}
    for k, v in data.get("weights", {}).items():
        weights.update(parse_weights(f"{k}={v}"))
    try:
        return Target(weights=weights, stacks=_stacks(data.get("stack", [])), **kw)
    except InputError as exc:
        raise InputError(str(exc), file=str(path)) from None


def _stacks(tables) -> tuple:
    """The ``[[stack]]`` tables of a target file as ``(name, ((key, thickness m), ...))``."""
    from ranking.stack import parse_layer

    if not isinstance(tables, list):
        raise InputError("'stack' must be a list of tables ([[stack]])", field="stack")
    out = []
    for i, tb in enumerate(tables, 1):
        layers = tb.get("layers") if isinstance(tb, dict) else None
        if not isinstance(layers, list) or not layers or not all(isinstance(x, str) for x in layers):
            raise InputError(f"stack {i}: 'layers' must be a list of \"KEY:THICKNESS\" strings", field="stack.layers")
        unknown = set(tb) - {"name", "layers"}
        if unknown:
            raise InputError(f"stack {i}: unknown field '{sorted(unknown)[0]}'", field="stack")
        parsed = tuple(parse_layer(x) for x in layers)
        out.append((str(tb.get("name", " + ".join(k for k, _ in parsed))), parsed))
    return tuple(out)


def with_overrides(target: Target, **changes) -> Target:
    """A copy of ``target`` with the options given on the command line (None = keep the file's)."""
    return replace(target, **{k: v for k, v in changes.items() if v is not None})


def target_from_options(*, target_file=None, voltage=None, tmin=None, tmax=None, energy=None, energy_density=None,
                        frequency=None, max_loss_tangent=None, failure_probability=None, margin=None, area=None,
                        segment_area=None, families=None, thicknesses=None, weights=None,
                        assume_defaults: bool = False, strict: bool = False, extrapolate: bool = False,
                        max_sections: int | None = None,
                        capacitance=None, ripple=None, ripple_current=None, ripple_frequency=None,
                        series_resistance=None, thermal_resistance=None, ambient=None, life=None,
                        life_fraction=None, packing_factor=None) -> Target:
    """A Target from a target file and/or command options as typed (an option given overrides the file).

    Quantities are text, in the option's default unit unless one is written; ``families`` is comma-separated,
    ``thicknesses`` as :func:`parse_thicknesses`, ``weights`` as :func:`parse_weights` (merged over the file's).
    Without a file, voltage, tmin and tmax are needed. Errors name the option.
    """
    given = {"voltage": voltage, "tmin": tmin, "tmax": tmax, "energy": energy, "energy_density": energy_density,
             "frequency": frequency, "area": area, "segment_area": segment_area, "capacitance": capacitance,
             "series_resistance": series_resistance, "thermal_resistance": thermal_resistance, "ambient": ambient,
             "life": life}
    opts = _quantities({k: v for k, v in given.items() if v}, options=True)
    opts.update(
        max_loss_tangent=max_loss_tangent, failure_probability=failure_probability, margin=margin,
        families=tuple(f.strip() for f in families.split(",")) if families else None,
        thicknesses_m=parse_thicknesses(thicknesses) if thicknesses else None,
        assume_defaults=True if assume_defaults else None,
        strict=True if strict else None,
        extrapolate=True if extrapolate else None,
        max_sections=max_sections,
        ripple=parse_ripple(ripple, current=ripple_current, frequency=ripple_frequency) or None,
        life_fraction=life_fraction, packing_factor=packing_factor,
    )

    w = parse_weights(weights) if weights else None
    if target_file:
        t = load_target(target_file)
        # an energy or a capacitance given as an option replaces whichever of the two the file states
        if opts.get("capacitance_F") is not None:
            t = replace(t, energy_J=None, energy_from_capacitance=False, capacitance_F=opts.pop("capacitance_F"))
        elif opts.get("energy_J") is not None:
            t = replace(t, capacitance_F=None, energy_from_capacitance=False, energy_J=opts.pop("energy_J"))
        t = with_overrides(t, **opts)
        if w:
            t = with_overrides(t, weights={**t.weights, **w})
        return t
    missing = [_option(k) for k in ("voltage", "tmin", "tmax") if not given[k]]
    if missing:
        raise InputError(f"{', '.join(missing)} needed (or a --target file)")
    return Target(weights=w or {}, **{k: v for k, v in opts.items() if v is not None})
