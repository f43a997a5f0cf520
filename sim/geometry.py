"""Tank shapes: liquid volume and level, wetted and dry areas, free-surface area.

Each shape is a frozen dataclass of *internal* dimensions in metres and shares the
interface of :class:`TankShape`:

* ``volume()``, ``height()``, ``surface_area()`` -- totals [m^3], [m], [m^2];
* ``liquid_volume(level)`` and its inverse ``level(liquid_volume)``;
* ``wetted_area(level)``, ``dry_area(level)``, ``free_surface_area(level)``;
* ``level_at_fill(fill_fraction)``, ``wetted_area_at_fill(fill_fraction)``.

The level-dependent methods take a float or an array and return the same kind.

Conventions
-----------
Level
    Measured up from the lowest internal point of the tank [m]; values outside
    ``[0, height()]`` are clipped, and so are liquid volumes outside
    ``[0, volume()]``.
Heat-transfer surface
    The outer boundary of the cargo space (liquid plus vapour). Internal
    bulkheads (the centre-line bulkhead of a bilobe tank) are excluded.
Wetted area
    The part of that boundary in contact with liquid. A flat horizontal bottom
    (prismatic and vertical-cylinder tanks) counts as wetted at every level,
    including 0: any heel covers it, and ``wetted_area`` then rises continuously
    from an empty tank. A flat horizontal top counts as wetted only when the level
    equals the height: a brim-full tank has no vapour space left, so
    ``wetted_area(height()) == surface_area()`` holds for every shape. That step
    at the very top is the only discontinuity; filling limits keep cargo tanks
    well below it. Curved-bottom shapes (sphere, horizontal cylinder, bilobe)
    have ``wetted_area(0) == 0``.

Shapes are chosen by name from :data:`SHAPES` and built from scenario-style keys
(``diameter_m``, ``length_m``, ``width_m``, ``height_m``, ``heads``) by
:func:`make_shape`.

Examples
--------
>>> tank = make_shape("sphere", diameter_m=2.0)
>>> round(tank.volume(), 6)
4.18879
>>> round(tank.level(tank.volume() / 2), 12)
1.0
"""

from __future__ import annotations

import dataclasses
import math
import numbers
from abc import ABC, abstractmethod
from bisect import bisect_right
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from functools import cached_property
from types import SimpleNamespace
from typing import Any, ClassVar

import numpy as np
from numpy.typing import ArrayLike, NDArray

FloatOrArray = float | NDArray[np.float64]

#: Head shapes of a horizontal cylinder; the first is the default.
HEAD_TYPES: tuple[str, ...] = ("hemispherical", "flat")
#: Default head shape of a horizontal cylinder when a scenario gives none.
DEFAULT_HEADS = "hemispherical"

# Level-table resolution for the volume -> level inverse. With 1024 intervals the
# cubic Hermite start is within ~1e-10 of the tank height for 90 % of volumes
# (worse only next to the bottom and top of curved tanks, where the section area
# goes to zero), so one Newton step usually lands at round-off, rarely three.
_TABLE_INTERVALS = 1024
# Newton stops when its last step is below this fraction of the height; the
# remaining error is then of order the square of that step (quadratic convergence).
_NEWTON_STEP_TOLERANCE = 1e-12
_NEWTON_MAX_STEPS = 12

# The same formula serves floats (fast ``math`` calls, for ODE right-hand sides)
# and arrays (numpy). Each formula takes one of these namespaces as ``ops``.
_SCALAR_OPS = SimpleNamespace(
    sqrt=math.sqrt, atan2=math.atan2, asin=math.asin, minimum=min, maximum=max
)
_ARRAY_OPS = SimpleNamespace(
    sqrt=np.sqrt, atan2=np.arctan2, asin=np.arcsin, minimum=np.minimum, maximum=np.maximum
)


# ---------------------------------------------------------------------------
# Closed-form pieces (``level`` is the height above the lowest point of the circle
# or sphere, in [0, 2 * radius]).


def _circle_angle_below(radius: float, level, ops):
    """Half-angle at the centre subtended by the chord at ``level`` [rad].

    Equal to acos((r - z)/r), but computed as atan2(sqrt(z(2r - z)), r - z):
    acos of a number next to 1 loses half the significant digits, which would
    spoil volumes (and the level inverse) within ~1e-8 of the bottom.
    """
    return ops.atan2(ops.sqrt(level * (2.0 * radius - level)), radius - level)


def _circle_segment_area(radius: float, level, ops):
    """Area of a circle below a horizontal chord: r^2 acos((r-z)/r) - (r-z) sqrt(z(2r-z))."""
    half_chord = ops.sqrt(level * (2.0 * radius - level))
    angle = ops.atan2(half_chord, radius - level)
    return radius * radius * angle - (radius - level) * half_chord


def _circle_arc_below(radius: float, level, ops):
    """Length of a circle's arc below a horizontal chord: 2 r acos((r-z)/r)."""
    return 2.0 * radius * _circle_angle_below(radius, level, ops)


def _circle_half_chord(radius: float, level, ops):
    """Half the chord of a circle at a height above its lowest point: sqrt(z(2r-z))."""
    return ops.sqrt(level * (2.0 * radius - level))


def _sphere_segment_volume(radius: float, level):
    """Volume of a sphere below a horizontal plane (spherical cap): pi z^2 (3r - z)/3."""
    return math.pi * level * level * (3.0 * radius - level) / 3.0


def _sphere_section_area(radius: float, level):
    """Area of the circular section of a sphere at a height: pi z (2r - z)."""
    return math.pi * level * (2.0 * radius - level)


def _sphere_zone_area(radius: float, level):
    """Curved area of a sphere below a horizontal plane (Archimedes): 2 pi r z."""
    return 2.0 * math.pi * radius * level


def _positive_length(value: object, label: str, shape_name: str) -> float:
    """Return ``value`` as a float, or raise ValueError unless it is positive and finite."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise ValueError(f"{label} = {value!r} for a {shape_name} tank must be a number of metres")
    length = float(value)
    if not (math.isfinite(length) and length > 0.0):
        raise ValueError(
            f"{label} = {value!r} for a {shape_name} tank must be a positive finite "
            "number of metres"
        )
    return length


def _plain_label(field_name: str) -> str:
    return field_name


@dataclass(frozen=True)
class _LevelTable:
    """Tabulated volume(level) for the level inverse; lists for bisect, arrays for numpy."""

    levels: list[float]
    volumes: list[float]
    areas: list[float]
    level_array: NDArray[np.float64]
    volume_array: NDArray[np.float64]
    area_array: NDArray[np.float64]
    # 1/p for the power law V ~ level^p fitted in the bottom interval, and the same
    # for the empty volume in the top interval (used where the section area is zero).
    bottom_inverse_exponent: float
    top_inverse_exponent: float


# ---------------------------------------------------------------------------


class TankShape(ABC):
    """Common interface and volume-to-level machinery of all tank shapes.

    Subclasses are frozen dataclasses of internal dimensions [m]. They supply the
    closed-form liquid volume, section (free-surface) area and wetted area below a
    level; this class clips the inputs, dispatches floats and arrays, and inverts
    the volume.

    Notes
    -----
    ``level`` inverts ``liquid_volume`` with a table of 1024 intervals (plus any
    levels where the section area has a kink), built on first use and cached on
    the instance. A start value comes from cubic Hermite interpolation of level
    against volume, using dlevel/dvolume = 1 / section area at the nodes; in the
    bottom and top intervals, where the section area of a curved tank is zero,
    from a power law V ~ level^p fitted to the interval. Newton steps with the
    section area as derivative, kept inside the interval, then polish it to
    round-off.
    """

    #: Registry key of the shape, as written in scenario files.
    name: ClassVar[str]
    #: Scenario keys that must be given, in order.
    required_keys: ClassVar[tuple[str, ...]]
    #: Scenario key -> dataclass field, for required and optional keys.
    _field_for_key: ClassVar[tuple[tuple[str, str], ...]]
    #: Dataclass fields that are lengths [m].
    _length_fields: ClassVar[tuple[str, ...]]

    # Set in __post_init__ by every subclass.
    _height: float
    _volume: float
    _surface_area: float

    # -- construction and validation -------------------------------------------

    def __post_init__(self) -> None:
        values = {field.name: getattr(self, field.name) for field in dataclasses.fields(self)}
        for field_name, value in self._checked(values, _plain_label).items():
            object.__setattr__(self, field_name, value)
        self._derive()

    @classmethod
    def _checked(cls, values: Mapping[str, Any], label: Callable[[str], str]) -> dict[str, Any]:
        """Validate dimension values; return them with lengths as floats.

        ``label`` turns a field name into the name shown in error messages.
        """
        checked = dict(values)
        for field_name in cls._length_fields:
            checked[field_name] = _positive_length(values[field_name], label(field_name), cls.name)
        cls._check_proportions(checked, label)
        return checked

    @classmethod
    def _check_proportions(cls, values: Mapping[str, Any], label: Callable[[str], str]) -> None:
        """Raise ValueError if positive dimensions do not make a valid shape."""
        return  # any positive dimensions do, unless a subclass says otherwise

    def _set(self, **derived: float) -> None:
        for attribute, value in derived.items():
            object.__setattr__(self, attribute, value)

    @abstractmethod
    def _derive(self) -> None:
        """Store ``_height``, ``_volume``, ``_surface_area`` and any other constants."""

    # -- closed-form hooks, level already clipped to [0, height] --------------

    @abstractmethod
    def _volume_below(self, level, ops):
        """Liquid volume below ``level`` [m^3]."""

    @abstractmethod
    def _section_area(self, level, ops):
        """Horizontal cross-section (free-surface) area at ``level`` [m^2]."""

    @abstractmethod
    def _wetted_below(self, level, ops):
        """Heat-transfer surface below ``level`` [m^2]."""

    def _kink_levels(self) -> tuple[float, ...]:
        """Levels where the section area has a kink (added to the level table) [m]."""
        return ()

    # -- totals ----------------------------------------------------------------

    def volume(self) -> float:
        """Total internal volume.

        Returns
        -------
        float
            Internal volume of the tank [m^3].
        """
        return self._volume

    def height(self) -> float:
        """Internal height from the lowest to the highest internal point.

        Returns
        -------
        float
            Internal height [m].
        """
        return self._height

    def surface_area(self) -> float:
        """Total heat-transfer surface (outer boundary of the cargo space).

        Returns
        -------
        float
            Internal surface area, internal bulkheads excluded [m^2].
        """
        return self._surface_area

    # -- level-dependent quantities --------------------------------------------

    def _at_level(self, hook, level):
        """Evaluate a closed-form hook at clipped level(s); float in, float out."""
        if isinstance(level, (float, int)):
            top = self._height
            level = float(level)
            level = 0.0 if level < 0.0 else (top if level > top else level)
            return hook(level, _SCALAR_OPS)
        levels = np.asarray(level, dtype=float)
        if levels.ndim == 0:
            return self._at_level(hook, float(levels))
        return hook(np.clip(levels, 0.0, self._height), _ARRAY_OPS)

    def liquid_volume(self, level: float | ArrayLike) -> FloatOrArray:
        """Liquid volume below a level.

        Parameters
        ----------
        level : float or array_like
            Liquid level above the tank bottom, clipped to ``[0, height()]`` [m].

        Returns
        -------
        float or ndarray
            Liquid volume [m^3]; a float for a scalar level.
        """
        return self._at_level(self._volume_below, level)

    def free_surface_area(self, level: float | ArrayLike) -> FloatOrArray:
        """Area of the liquid free surface, i.e. the horizontal section at a level.

        It is also d(liquid_volume)/d(level).

        Parameters
        ----------
        level : float or array_like
            Liquid level above the tank bottom, clipped to ``[0, height()]`` [m].

        Returns
        -------
        float or ndarray
            Free-surface area [m^2]; a float for a scalar level.
        """
        return self._at_level(self._section_area, level)

    def wetted_area(self, level: float | ArrayLike) -> FloatOrArray:
        """Heat-transfer surface in contact with liquid (walls, bottom and ends).

        Parameters
        ----------
        level : float or array_like
            Liquid level above the tank bottom, clipped to ``[0, height()]`` [m].

        Returns
        -------
        float or ndarray
            Wetted area [m^2]; a float for a scalar level. A flat bottom counts as
            wetted at every level, a flat top only at ``height()`` (see the module
            notes).
        """
        return self._at_level(self._wetted_below, level)

    def dry_area(self, level: float | ArrayLike) -> FloatOrArray:
        """Heat-transfer surface in contact with vapour: ``surface_area() - wetted_area``.

        Parameters
        ----------
        level : float or array_like
            Liquid level above the tank bottom, clipped to ``[0, height()]`` [m].

        Returns
        -------
        float or ndarray
            Dry area [m^2]; a float for a scalar level.
        """
        return self._surface_area - self.wetted_area(level)

    def level(self, liquid_volume: float | ArrayLike) -> FloatOrArray:
        """Liquid level for a liquid volume (inverse of :meth:`liquid_volume`).

        Parameters
        ----------
        liquid_volume : float or array_like
            Liquid volume, clipped to ``[0, volume()]`` [m^3].

        Returns
        -------
        float or ndarray
            Liquid level above the tank bottom [m]; a float for a scalar volume.

        Notes
        -----
        The inverse is solved to about 1e-12 of ``height()``. Near the top of a
        sphere the volume, a double, resolves the level only to about
        ``sqrt(machine epsilon)`` of the height (the missing cap shrinks with the
        square of the gap), so a round trip there is good to ~1e-8.
        """
        if isinstance(liquid_volume, (float, int)):
            return self._level_scalar(float(liquid_volume))
        volumes = np.asarray(liquid_volume, dtype=float)
        if volumes.ndim == 0:
            return self._level_scalar(float(volumes))
        return self._level_array(volumes)

    def level_at_fill(self, fill_fraction: float | ArrayLike) -> FloatOrArray:
        """Liquid level at a filling ratio.

        Parameters
        ----------
        fill_fraction : float or array_like
            Liquid volume over total volume, clipped to ``[0, 1]`` [-].

        Returns
        -------
        float or ndarray
            Liquid level above the tank bottom [m].
        """
        if isinstance(fill_fraction, (float, int)):
            return self._level_scalar(float(fill_fraction) * self._volume)
        return self.level(np.asarray(fill_fraction, dtype=float) * self._volume)

    def wetted_area_at_fill(self, fill_fraction: float | ArrayLike) -> FloatOrArray:
        """Wetted heat-transfer surface at a filling ratio.

        Parameters
        ----------
        fill_fraction : float or array_like
            Liquid volume over total volume, clipped to ``[0, 1]`` [-].

        Returns
        -------
        float or ndarray
            Wetted area [m^2].
        """
        return self.wetted_area(self.level_at_fill(fill_fraction))

    # -- volume -> level ---------------------------------------------------------

    @cached_property
    def _level_table(self) -> _LevelTable:
        uniform = np.linspace(0.0, self._height, _TABLE_INTERVALS + 1)
        levels = np.unique(np.concatenate([uniform, np.asarray(self._kink_levels(), float)]))
        volumes = self._volume_below(levels, _ARRAY_OPS)
        areas = self._section_area(levels, _ARRAY_OPS)
        # Exact end values, so the bracket search never falls off the table.
        volumes[0], volumes[-1] = 0.0, self._volume
        # V ~ c z^p  =>  p = z dV/dz / V; for the top use the empty volume.
        bottom_exponent = (levels[1] - levels[0]) * areas[1] / volumes[1]
        top_exponent = (levels[-1] - levels[-2]) * areas[-2] / (volumes[-1] - volumes[-2])
        return _LevelTable(
            levels=levels.tolist(),
            volumes=volumes.tolist(),
            areas=areas.tolist(),
            level_array=levels,
            volume_array=volumes,
            area_array=areas,
            bottom_inverse_exponent=1.0 / bottom_exponent,
            top_inverse_exponent=1.0 / top_exponent,
        )

    def _level_scalar(self, volume: float) -> float:
        if not volume > 0.0:
            return 0.0 if volume <= 0.0 else math.nan
        if volume >= self._volume:
            return self._height
        table = self._level_table
        last = len(table.levels) - 2
        index = bisect_right(table.volumes, volume) - 1
        if index > last:
            index = last
        level_low, level_high = table.levels[index], table.levels[index + 1]
        volume_low, volume_high = table.volumes[index], table.volumes[index + 1]
        area_low, area_high = table.areas[index], table.areas[index + 1]
        span = volume_high - volume_low
        fraction = (volume - volume_low) / span
        if area_low <= 0.0:
            level = level_low + (level_high - level_low) * fraction**table.bottom_inverse_exponent
        elif area_high <= 0.0:
            empty_fraction = (volume_high - volume) / span
            level = level_high - (level_high - level_low) * (
                empty_fraction**table.top_inverse_exponent
            )
        else:
            # Cubic Hermite in volume, slopes dlevel/dvolume = 1/area.
            f2 = fraction * fraction
            f3 = f2 * fraction
            level = (
                (2.0 * f3 - 3.0 * f2 + 1.0) * level_low
                + (f3 - 2.0 * f2 + fraction) * span / area_low
                + (3.0 * f2 - 2.0 * f3) * level_high
                + (f3 - f2) * span / area_high
            )
            level = (
                level_low if level < level_low else (level_high if level > level_high else level)
            )
        tolerance = _NEWTON_STEP_TOLERANCE * self._height
        for _ in range(_NEWTON_MAX_STEPS):
            area = self._section_area(level, _SCALAR_OPS)
            if area <= 0.0:
                break
            step = (self._volume_below(level, _SCALAR_OPS) - volume) / area
            level -= step
            level = (
                level_low if level < level_low else (level_high if level > level_high else level)
            )
            if abs(step) <= tolerance:
                break
        return level

    def _level_array(self, volumes: NDArray[np.float64]) -> NDArray[np.float64]:
        table = self._level_table
        volumes = np.clip(volumes, 0.0, self._volume)
        last = table.level_array.size - 2
        index = np.clip(np.searchsorted(table.volume_array, volumes, side="right") - 1, 0, last)
        level_low, level_high = table.level_array[index], table.level_array[index + 1]
        volume_low, volume_high = table.volume_array[index], table.volume_array[index + 1]
        area_low, area_high = table.area_array[index], table.area_array[index + 1]
        span = volume_high - volume_low
        with np.errstate(divide="ignore", invalid="ignore"):
            fraction = np.clip((volumes - volume_low) / span, 0.0, 1.0)
            empty_fraction = np.clip((volume_high - volumes) / span, 0.0, 1.0)
            f2 = fraction * fraction
            f3 = f2 * fraction
            hermite = (
                (2.0 * f3 - 3.0 * f2 + 1.0) * level_low
                + (f3 - 2.0 * f2 + fraction) * span / area_low
                + (3.0 * f2 - 2.0 * f3) * level_high
                + (f3 - f2) * span / area_high
            )
            width = level_high - level_low
            bottom = level_low + width * fraction**table.bottom_inverse_exponent
            top = level_high - width * empty_fraction**table.top_inverse_exponent
        level = np.where(area_low <= 0.0, bottom, np.where(area_high <= 0.0, top, hermite))
        level = np.clip(level, level_low, level_high)
        tolerance = _NEWTON_STEP_TOLERANCE * self._height
        for _ in range(_NEWTON_MAX_STEPS):
            area = self._section_area(level, _ARRAY_OPS)
            residual = self._volume_below(level, _ARRAY_OPS) - volumes
            with np.errstate(divide="ignore", invalid="ignore"):
                step = np.where(area > 0.0, residual / area, 0.0)
            level = np.clip(level - step, level_low, level_high)
            if not np.any(np.abs(step) > tolerance):
                break
        return np.where(volumes <= 0.0, 0.0, np.where(volumes >= self._volume, self._height, level))


class _ConstantSection(TankShape):
    """Shapes with a constant horizontal section: level is volume / section area."""

    _section: float

    def _level_scalar(self, volume: float) -> float:
        level = volume / self._section
        top = self._height
        return 0.0 if level < 0.0 else (top if level > top else level)

    def _level_array(self, volumes: NDArray[np.float64]) -> NDArray[np.float64]:
        return np.clip(volumes / self._section, 0.0, self._height)


# ---------------------------------------------------------------------------
# Shapes


@dataclass(frozen=True)
class Sphere(TankShape):
    """Spherical tank (e.g. a Moss-type LNG tank), internal diameter given.

    Parameters
    ----------
    diameter : float
        Internal diameter [m].

    Notes
    -----
    With radius :math:`r` and level :math:`z`:
    liquid volume (spherical cap) :math:`\\pi z^2 (3r - z)/3`;
    wetted area (spherical zone) :math:`2 \\pi r z`;
    free surface :math:`\\pi z (2r - z)`.
    """

    diameter: float

    name: ClassVar[str] = "sphere"
    required_keys: ClassVar[tuple[str, ...]] = ("diameter_m",)
    _field_for_key: ClassVar[tuple[tuple[str, str], ...]] = (("diameter_m", "diameter"),)
    _length_fields: ClassVar[tuple[str, ...]] = ("diameter",)

    def _derive(self) -> None:
        diameter = self.diameter
        self._set(
            _radius=diameter / 2.0,
            _height=diameter,
            _volume=math.pi * diameter**3 / 6.0,
            _surface_area=math.pi * diameter**2,
        )

    def _volume_below(self, level, ops):
        return _sphere_segment_volume(self._radius, level)

    def _section_area(self, level, ops):
        return _sphere_section_area(self._radius, level)

    def _wetted_below(self, level, ops):
        return _sphere_zone_area(self._radius, level)


@dataclass(frozen=True)
class HorizontalCylinder(TankShape):
    """Horizontal cylindrical tank (e.g. an IMO type C pressure tank).

    Parameters
    ----------
    diameter : float
        Internal diameter of the shell [m].
    length : float
        Overall internal length, tip to tip of the heads [m]. With hemispherical
        heads the cylindrical part is ``length - diameter``, which must not be
        negative.
    heads : {"hemispherical", "flat"}
        Shape of both heads; default "hemispherical". Real dished (torispherical
        or semi-ellipsoidal) heads lie between the two.

    Notes
    -----
    With radius :math:`r`, cylindrical length :math:`L_c` and level :math:`z`, the
    circular segment below the level has area
    :math:`r^2 \\arccos((r - z)/r) - (r - z)\\sqrt{z(2r - z)}` and arc length
    :math:`2 r \\arccos((r - z)/r)`. The cylindrical part holds
    :math:`L_c` times the segment area. Two hemispherical heads together are one
    sphere: they add a spherical cap :math:`\\pi z^2 (3r - z)/3` of volume and a
    spherical zone :math:`2 \\pi r z` of wetted area. Flat heads add twice the
    segment area to the wetted area.
    """

    diameter: float
    length: float
    heads: str = DEFAULT_HEADS

    name: ClassVar[str] = "horizontal-cylinder"
    required_keys: ClassVar[tuple[str, ...]] = ("diameter_m", "length_m")
    _field_for_key: ClassVar[tuple[tuple[str, str], ...]] = (
        ("diameter_m", "diameter"),
        ("length_m", "length"),
        ("heads", "heads"),
    )
    _length_fields: ClassVar[tuple[str, ...]] = ("diameter", "length")

    @classmethod
    def _check_proportions(cls, values: Mapping[str, Any], label: Callable[[str], str]) -> None:
        heads = values["heads"]
        if heads not in HEAD_TYPES:
            raise ValueError(
                f"{label('heads')} = {heads!r} for a {cls.name} tank must be one of "
                + ", ".join(repr(kind) for kind in HEAD_TYPES)
            )
        if heads == "hemispherical" and values["length"] < values["diameter"]:
            raise ValueError(
                f"{label('length')} = {values['length']!r} for a {cls.name} tank with "
                f"hemispherical heads must be at least {label('diameter')} "
                f"({values['diameter']!r}): it is the overall length, tip to tip"
            )

    @property
    def cylindrical_length(self) -> float:
        """Length of the cylindrical part between the heads [m]."""
        return self._cylindrical_length

    def _derive(self) -> None:
        radius = self.diameter / 2.0
        hemispherical = self.heads == "hemispherical"
        cylindrical = self.length - self.diameter if hemispherical else self.length
        section = math.pi * radius * radius
        if hemispherical:
            volume = section * cylindrical + math.pi * self.diameter**3 / 6.0
            surface = math.pi * self.diameter * cylindrical + math.pi * self.diameter**2
        else:
            volume = section * cylindrical
            surface = math.pi * self.diameter * cylindrical + 2.0 * section
        self._set(
            _radius=radius,
            _hemispherical=hemispherical,
            _cylindrical_length=cylindrical,
            _height=self.diameter,
            _volume=volume,
            _surface_area=surface,
        )

    def _volume_below(self, level, ops):
        radius = self._radius
        volume = self._cylindrical_length * _circle_segment_area(radius, level, ops)
        if self._hemispherical:
            volume = volume + _sphere_segment_volume(radius, level)
        return volume

    def _section_area(self, level, ops):
        radius = self._radius
        area = 2.0 * self._cylindrical_length * _circle_half_chord(radius, level, ops)
        if self._hemispherical:
            area = area + _sphere_section_area(radius, level)
        return area

    def _wetted_below(self, level, ops):
        radius = self._radius
        shell = self._cylindrical_length * _circle_arc_below(radius, level, ops)
        if self._hemispherical:
            return shell + _sphere_zone_area(radius, level)
        return shell + 2.0 * _circle_segment_area(radius, level, ops)


@dataclass(frozen=True)
class Bilobe(TankShape):
    """Bilobe tank: two overlapping horizontal cylinders with flat ends.

    The two lobes have equal diameter and their axes lie side by side at the same
    height, ``width - diameter`` apart, so the cross-section is the union of two
    overlapping circles. A centre-line bulkhead joins the two points where the
    circles cross; it is internal and not part of the heat-transfer surface.
    Liquid communicates between the lobes, so both have the same level. Both ends
    are flat (real bilobe tanks usually have dished ends, which this ignores).

    Parameters
    ----------
    diameter : float
        Internal diameter of each lobe [m].
    length : float
        Internal length between the flat ends [m].
    width : float
        Overall internal breadth of both lobes; must lie strictly between
        ``diameter`` and ``2 * diameter`` [m].

    Notes
    -----
    Radius :math:`r`, half axis spacing :math:`a = (w - d)/2`; the circles cross at
    heights :math:`r \\pm y_c` above the bottom, :math:`y_c = \\sqrt{r^2 - a^2}`,
    with half-angle :math:`\\varphi_c = \\arccos(a/r)` seen from either axis.
    The section below a level is twice the circular segment below it, minus the
    part of the lens (the overlap of the circles) below it. The lens is
    :math:`2 s - 2 a` wide at half-chord :math:`s`, so its part below level
    :math:`z` is :math:`S(z') - S(r - y_c) - 2 a (z' - (r - y_c))`, with
    :math:`S` the circular segment area and :math:`z'` the level clipped to
    :math:`[r - y_c, r + y_c]`; the whole lens is
    :math:`2 r^2 \\varphi_c - 2 a y_c`. The outer boundary of each lobe is its
    circle less the arc of half-angle :math:`\\varphi_c` inside the other lobe,
    giving an outer perimeter :math:`4 \\pi r - 4 r \\varphi_c`. The free-surface
    width is :math:`2 s + 2 \\min(s, a)`, with a kink where the circles cross.
    """

    diameter: float
    length: float
    width: float

    name: ClassVar[str] = "bilobe"
    required_keys: ClassVar[tuple[str, ...]] = ("diameter_m", "length_m", "width_m")
    _field_for_key: ClassVar[tuple[tuple[str, str], ...]] = (
        ("diameter_m", "diameter"),
        ("length_m", "length"),
        ("width_m", "width"),
    )
    _length_fields: ClassVar[tuple[str, ...]] = ("diameter", "length", "width")

    @classmethod
    def _check_proportions(cls, values: Mapping[str, Any], label: Callable[[str], str]) -> None:
        diameter, width = values["diameter"], values["width"]
        if not diameter < width < 2.0 * diameter:
            raise ValueError(
                f"{label('width')} = {width!r} for a {cls.name} tank must be between "
                f"{label('diameter')} ({diameter!r}) and twice {label('diameter')} "
                f"({2.0 * diameter!r}), both excluded, so that the lobes overlap"
            )

    @property
    def axis_spacing(self) -> float:
        """Horizontal distance between the axes of the two lobes [m]."""
        return self.width - self.diameter

    def _derive(self) -> None:
        radius = self.diameter / 2.0
        half_spacing = (self.width - self.diameter) / 2.0
        crossing = math.sqrt((radius - half_spacing) * (radius + half_spacing))
        half_angle = math.atan2(crossing, half_spacing)  # = acos(a / r)
        lens = 2.0 * radius * radius * half_angle - 2.0 * half_spacing * crossing
        section = 2.0 * math.pi * radius * radius - lens
        perimeter = 4.0 * math.pi * radius - 4.0 * radius * half_angle
        lens_bottom = radius - crossing
        self._set(
            _radius=radius,
            _half_spacing=half_spacing,
            _half_angle=half_angle,
            _lens_bottom=lens_bottom,
            _lens_top=radius + crossing,
            _segment_at_lens_bottom=_circle_segment_area(radius, lens_bottom, _SCALAR_OPS),
            _section=section,
            _height=self.diameter,
            _volume=section * self.length,
            _surface_area=perimeter * self.length + 2.0 * section,
        )

    def _kink_levels(self) -> tuple[float, ...]:
        return (self._lens_bottom, self._lens_top)

    def _end_area_below(self, level, ops):
        """Union-of-circles section area below ``level`` [m^2]."""
        radius = self._radius
        in_lens = ops.minimum(ops.maximum(level, self._lens_bottom), self._lens_top)
        lens_below = (
            _circle_segment_area(radius, in_lens, ops)
            - self._segment_at_lens_bottom
            - 2.0 * self._half_spacing * (in_lens - self._lens_bottom)
        )
        return 2.0 * _circle_segment_area(radius, level, ops) - lens_below

    def _volume_below(self, level, ops):
        return self.length * self._end_area_below(level, ops)

    def _section_area(self, level, ops):
        half_chord = _circle_half_chord(self._radius, level, ops)
        return self.length * 2.0 * (half_chord + ops.minimum(half_chord, self._half_spacing))

    def _wetted_below(self, level, ops):
        radius = self._radius
        half_angle = self._half_angle
        # Arc of each lobe inside the other, below the level, measured as an angle
        # from the lower crossing point.
        inner_angle = (
            ops.minimum(ops.maximum(ops.asin((level - radius) / radius), -half_angle), half_angle)
            + half_angle
        )
        outer_arcs = 2.0 * (_circle_arc_below(radius, level, ops) - radius * inner_angle)
        return self.length * outer_arcs + 2.0 * self._end_area_below(level, ops)


@dataclass(frozen=True)
class Prismatic(_ConstantSection):
    """Prismatic (box-shaped) tank.

    Real prismatic and membrane tanks have chamfered upper and lower corners; this
    shape ignores them and is a plain rectangular box.

    Parameters
    ----------
    length : float
        Internal length [m].
    width : float
        Internal breadth [m].
    box_height : float
        Internal height, bottom to top (scenario key ``height_m``) [m].

    Notes
    -----
    Liquid volume :math:`L W z`; wetted area :math:`L W + 2 (L + W) z`, plus the
    top :math:`L W` when the tank is brim-full (see the module notes).
    """

    length: float
    width: float
    box_height: float

    name: ClassVar[str] = "prismatic"
    required_keys: ClassVar[tuple[str, ...]] = ("length_m", "width_m", "height_m")
    _field_for_key: ClassVar[tuple[tuple[str, str], ...]] = (
        ("length_m", "length"),
        ("width_m", "width"),
        ("height_m", "box_height"),
    )
    _length_fields: ClassVar[tuple[str, ...]] = ("length", "width", "box_height")

    def _derive(self) -> None:
        floor = self.length * self.width
        self._set(
            _section=floor,
            _wall_perimeter=2.0 * (self.length + self.width),
            _height=self.box_height,
            _volume=floor * self.box_height,
            _surface_area=2.0 * floor + 2.0 * (self.length + self.width) * self.box_height,
        )

    def _volume_below(self, level, ops):
        return self._section * level

    def _section_area(self, level, ops):
        return self._section + 0.0 * level

    def _wetted_below(self, level, ops):
        brim_full = level >= self._height
        return self._section + self._wall_perimeter * level + self._section * brim_full


@dataclass(frozen=True)
class VerticalCylinder(_ConstantSection):
    """Vertical cylindrical tank with flat bottom and top.

    Parameters
    ----------
    diameter : float
        Internal diameter [m].
    cylinder_height : float
        Internal height, bottom to top (scenario key ``height_m``) [m].

    Notes
    -----
    Liquid volume :math:`\\pi r^2 z`; wetted area :math:`\\pi r^2 + 2 \\pi r z`, plus
    the top :math:`\\pi r^2` when the tank is brim-full (see the module notes).
    """

    diameter: float
    cylinder_height: float

    name: ClassVar[str] = "vertical-cylinder"
    required_keys: ClassVar[tuple[str, ...]] = ("diameter_m", "height_m")
    _field_for_key: ClassVar[tuple[tuple[str, str], ...]] = (
        ("diameter_m", "diameter"),
        ("height_m", "cylinder_height"),
    )
    _length_fields: ClassVar[tuple[str, ...]] = ("diameter", "cylinder_height")

    def _derive(self) -> None:
        floor = math.pi * self.diameter**2 / 4.0
        wall = math.pi * self.diameter
        self._set(
            _section=floor,
            _wall_perimeter=wall,
            _height=self.cylinder_height,
            _volume=floor * self.cylinder_height,
            _surface_area=2.0 * floor + wall * self.cylinder_height,
        )

    def _volume_below(self, level, ops):
        return self._section * level

    def _section_area(self, level, ops):
        return self._section + 0.0 * level

    def _wetted_below(self, level, ops):
        brim_full = level >= self._height
        return self._section + self._wall_perimeter * level + self._section * brim_full


# ---------------------------------------------------------------------------
# Registry

#: Shape name (as in scenario files) -> (class, required scenario keys). The
#: horizontal cylinder also takes an optional ``heads`` key, one of
#: :data:`HEAD_TYPES`, default :data:`DEFAULT_HEADS` ("hemispherical").
SHAPES: dict[str, tuple[type[TankShape], tuple[str, ...]]] = {
    shape.name: (shape, shape.required_keys)
    for shape in (Sphere, HorizontalCylinder, Bilobe, Prismatic, VerticalCylinder)
}


def make_shape(name: str, **dimensions_m: Any) -> TankShape:
    """Build a tank shape from its registry name and scenario-style dimensions.

    Parameters
    ----------
    name : str
        Shape name, a key of :data:`SHAPES` [-].
    **dimensions_m : float or str
        Internal dimensions under their scenario keys: ``diameter_m``,
        ``length_m``, ``width_m``, ``height_m`` as :data:`SHAPES` requires for the
        shape [m]; for "horizontal-cylinder" optionally ``heads``, one of
        :data:`HEAD_TYPES`, default "hemispherical" [-]. Keys the shape does not
        use are rejected rather than ignored.

    Returns
    -------
    TankShape
        The shape.

    Raises
    ------
    ValueError
        For an unknown shape name, a missing or unused key, a dimension that is not
        a positive finite number, or proportions the shape cannot have. The
        message names the shape, the key (as ``tank.<key>``), the value and what
        is allowed.

    Examples
    --------
    >>> make_shape("horizontal-cylinder", diameter_m=4.0, length_m=20.0)
    HorizontalCylinder(diameter=4.0, length=20.0, heads='hemispherical')
    """
    if name not in SHAPES:
        raise ValueError(f"unknown tank shape {name!r}; allowed shapes: " + ", ".join(SHAPES))
    shape, required = SHAPES[name]
    field_for_key = dict(shape._field_for_key)
    key_for_field = {field: key for key, field in shape._field_for_key}
    unused = [key for key in dimensions_m if key not in field_for_key]
    if unused:
        raise ValueError(
            f"tank.{unused[0]} is not used by a {name} tank; it takes " + ", ".join(field_for_key)
        )
    missing = [key for key in required if key not in dimensions_m]
    if missing:
        needed = ", ".join(f"tank.{key}" for key in missing)
        raise ValueError(f"a {name} tank needs {needed} (required: {', '.join(required)})")
    values = {field_for_key[key]: value for key, value in dimensions_m.items()}
    for field in dataclasses.fields(shape):
        if field.name not in values and field.default is not dataclasses.MISSING:
            values[field.name] = field.default
    checked = shape._checked(values, lambda field: f"tank.{key_for_field[field]}")
    return shape(**checked)
