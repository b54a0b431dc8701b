"""Type stubs for rotaframe's native module (checked with mypy and mypy.stubtest)."""

import os
from typing import Any, Callable, Literal, Optional, Sequence, Union, final, overload

import numpy as np
from numpy.typing import ArrayLike, NDArray
from typing_extensions import disjoint_base

_Array = NDArray[np.float64]
_FloatOrArray = Union[float, _Array]

__all__ = [
    "celestial_to_terrestrial",
    "cip_coordinates",
    "earth_motion_iers",
    "tio_locator",
    "EarthOrientation",
    "EarthOrientationAt",
    "LeapSeconds",
    "calendar_date",
    "convert_time",
    "from_gps_week_seconds",
    "gps_week_seconds",
    "julian_date",
    "AidedNavigator",
    "AidedResult",
    "Alignment",
    "ErrorBudget",
    "SolutionAt",
    "HeadingFixes",
    "HeightFixes",
    "InnovationLog",
    "MeasurementSet",
    "OdometerSpeeds",
    "PositionFixes",
    "VehicleConstraint",
    "VelocityFixes",
    "ZeroAngularRate",
    "ZeroVelocity",
    "_aided_navigator_from_parts",
    "_measurement_set_from_parts",
    "align_stationary",
    "heading_from_course",
    "ApparentAcceleration",
    "Calibration",
    "NoiseTerms",
    "UnobservableError",
    "_calibration_from_parts",
    "allan_deviation",
    "calibrate_accelerometers",
    "calibrate_accelerometers_by_magnitude",
    "calibrate_gyros",
    "fit_noise_terms",
    "ConcurrentUseError",
    "DeflectionBudget",
    "Drag",
    "EarthModel",
    "FrameGraph",
    "FrameGraphError",
    "FrameMismatchError",
    "FrameMotion",
    "GRS80",
    "ImuErrors",
    "InputTypeError",
    "NearEarthCentreError",
    "NearPoleError",
    "NonFiniteError",
    "NotPositiveError",
    "NotRotationMatrixError",
    "NotUnitQuaternionError",
    "OutOfRangeError",
    "Propagation",
    "RotaframeError",
    "ShapeError",
    "Strapdown",
    "StrapdownHistory",
    "WGS84",
    "ZeroNormError",
    "_earth_model_from_constants",
    "_frame_graph_from_parts",
    "_frame_motion_from_parts",
    "_strapdown_from_parts",
    "_imu_errors_from_parts",
    "apparent_acceleration",
    "centripetal_acceleration_ecef",
    "coriolis_ned",
    "coriolis_parameter",
    "discrete_error_model",
    "earth_motion",
    "earth_rate_ned",
    "earth_rotation_angle",
    "ecef_to_geodetic",
    "enu_from_ecef",
    "eotvos_correction",
    "euler_from_quat",
    "fast_kernels_active",
    "geodetic_to_ecef",
    "gravitation_ecef",
    "gravity_ecef",
    "gravity_ned",
    "ideal_imu",
    "imu_increments",
    "imu_increments_from_samples",
    "increments_from_rates",
    "lever_arm_state",
    "run_strapdowns",
    "schuler_period",
    "local_level_motion",
    "matrix_to_quat",
    "motion_from_samples",
    "ned_from_ecef",
    "normal_gravity",
    "predict_covariance",
    "propagate",
    "quat_from_euler",
    "quat_from_rotvec",
    "quat_inverse",
    "quat_multiply",
    "quat_rotate",
    "quat_to_matrix",
    "quat_to_rotvec",
    "radii_of_curvature",
    "transport_rate_ned",
]

def fast_kernels_active() -> bool: ...

# `out=`: the caller's float64 output array, or a tuple of them for several outputs.
_Out = Optional[Union[NDArray[np.float64], tuple[NDArray[np.float64], ...]]]

class RotaframeError(ValueError): ...
class NonFiniteError(RotaframeError): ...
class OutOfRangeError(RotaframeError): ...
class NotPositiveError(OutOfRangeError): ...
class ZeroNormError(RotaframeError): ...
class NotUnitQuaternionError(RotaframeError): ...
class NotRotationMatrixError(RotaframeError): ...
class NearPoleError(OutOfRangeError): ...
class NearEarthCentreError(OutOfRangeError): ...
class ShapeError(RotaframeError): ...
class FrameMismatchError(RotaframeError): ...
class ConcurrentUseError(RotaframeError): ...
class FrameGraphError(RotaframeError): ...
class InputTypeError(RotaframeError, TypeError): ...
class UnobservableError(RotaframeError): ...

_TimeScale = Literal["utc", "tai", "tt", "gps", "ut1"]

@final
class LeapSeconds:
    """A leap-second table: the MJDs at which TAI − UTC (s) takes each value, from 1972 on."""

    def __new__(cls, mjd: Sequence[int], tai_minus_utc: Sequence[float], expires: Optional[int] = None) -> LeapSeconds: ...
    @staticmethod
    def built_in() -> LeapSeconds: ...
    @staticmethod
    def from_iers(path: Union[str, os.PathLike[str]]) -> LeapSeconds: ...
    @property
    def steps(self) -> tuple[_Array, _Array]: ...
    @property
    def expires(self) -> Optional[int]: ...
    def tai_minus_utc(self, mjd: int) -> float: ...

@final
class EarthOrientationAt:
    """The Earth orientation at dates: UT1 − UTC (s), xp, yp, dX, dY (rad)."""

    @property
    def ut1_minus_utc(self) -> _FloatOrArray: ...
    @property
    def xp(self) -> _FloatOrArray: ...
    @property
    def yp(self) -> _FloatOrArray: ...
    @property
    def dx(self) -> _FloatOrArray: ...
    @property
    def dy(self) -> _FloatOrArray: ...
    @property
    def offsets_given(self) -> Union[bool, _Array]: ...

@final
class EarthOrientation:
    """IERS Earth orientation parameters tabulated at UTC dates, interpolated by 4-point Lagrange."""

    def __new__(
        cls,
        mjd_utc: ArrayLike,
        ut1_minus_utc: ArrayLike,
        xp: ArrayLike,
        yp: ArrayLike,
        dx: Optional[ArrayLike] = None,
        dy: Optional[ArrayLike] = None,
        leap_seconds: Optional[LeapSeconds] = None,
    ) -> EarthOrientation: ...
    @staticmethod
    def from_iers(path: Union[str, os.PathLike[str]], *, leap_seconds: Optional[LeapSeconds] = None) -> EarthOrientation: ...
    @property
    def mjd_span(self) -> tuple[float, float]: ...
    @property
    def offsets_until(self) -> Optional[float]: ...
    @property
    def rows(self) -> tuple[_Array, _Array, _Array, _Array, _Array, _Array]: ...
    def at(self, jd_utc: ArrayLike, jd_utc_fraction: Optional[ArrayLike] = None, *, threads: int = 1) -> EarthOrientationAt: ...

def celestial_to_terrestrial(
    jd_tt: ArrayLike,
    jd_tt_fraction: Optional[ArrayLike],
    jd_ut1: ArrayLike,
    jd_ut1_fraction: Optional[ArrayLike],
    xp: ArrayLike,
    yp: ArrayLike,
    *,
    dx: Optional[ArrayLike] = None,
    dy: Optional[ArrayLike] = None,
    out: _Out = None,
    threads: int = 1,
) -> _Array: ...
def cip_coordinates(
    jd_tt: ArrayLike, jd_tt_fraction: Optional[ArrayLike] = None, *, threads: int = 1
) -> tuple[_FloatOrArray, _FloatOrArray, _FloatOrArray]: ...
def tio_locator(jd_tt: ArrayLike, jd_tt_fraction: Optional[ArrayLike] = None, *, threads: int = 1) -> _FloatOrArray: ...
def earth_motion_iers(
    jd_tt: ArrayLike, jd_tt_fraction: Optional[ArrayLike], eop: EarthOrientation, *, threads: int = 1
) -> FrameMotion: ...
def julian_date(
    year: ArrayLike,
    month: ArrayLike,
    day: ArrayLike,
    hour: Optional[ArrayLike] = None,
    minute: Optional[ArrayLike] = None,
    second: Optional[ArrayLike] = None,
    *,
    scale: Optional[_TimeScale] = None,
    leap_seconds: Optional[LeapSeconds] = None,
    threads: int = 1,
) -> tuple[_FloatOrArray, _FloatOrArray]: ...
def calendar_date(
    jd: ArrayLike,
    jd_fraction: Optional[ArrayLike] = None,
    *,
    scale: Optional[_TimeScale] = None,
    leap_seconds: Optional[LeapSeconds] = None,
    threads: int = 1,
) -> tuple[Union[int, _Array], Union[int, _Array], Union[int, _Array], Union[int, _Array], Union[int, _Array], _FloatOrArray]: ...
def convert_time(
    jd: ArrayLike,
    jd_fraction: Optional[ArrayLike],
    from_scale: _TimeScale,
    to_scale: _TimeScale,
    *,
    eop: Optional[EarthOrientation] = None,
    leap_seconds: Optional[LeapSeconds] = None,
    threads: int = 1,
) -> tuple[_FloatOrArray, _FloatOrArray]: ...
def gps_week_seconds(
    jd: ArrayLike,
    jd_fraction: Optional[ArrayLike] = None,
    *,
    scale: Optional[_TimeScale] = None,
    leap_seconds: Optional[LeapSeconds] = None,
    threads: int = 1,
) -> tuple[Union[int, _Array], _FloatOrArray]: ...
def from_gps_week_seconds(
    week: ArrayLike,
    seconds: ArrayLike,
    *,
    scale: Optional[_TimeScale] = None,
    leap_seconds: Optional[LeapSeconds] = None,
    threads: int = 1,
) -> tuple[_FloatOrArray, _FloatOrArray]: ...

@final
class EarthModel:
    """A reference ellipsoid with its normal gravity field."""

    def __new__(
        cls,
        *,
        a: float,
        f: float,
        gm: float,
        omega: float,
        gamma_equator: Optional[float] = None,
        gamma_pole: Optional[float] = None,
        j2: Optional[float] = None,
    ) -> EarthModel: ...
    @property
    def a(self) -> float: ...
    @property
    def f(self) -> float: ...
    @property
    def b(self) -> float: ...
    @property
    def e2(self) -> float: ...
    @property
    def ep2(self) -> float: ...
    @property
    def gm(self) -> float: ...
    @property
    def omega(self) -> float: ...
    @property
    def gamma_equator(self) -> float: ...
    @property
    def gamma_pole(self) -> float: ...
    @property
    def j2(self) -> float: ...
    @property
    def k(self) -> float: ...
    @property
    def m(self) -> float: ...
    def __eq__(self, other: object, /) -> bool: ...
    def __hash__(self) -> int: ...
    def __reduce__(self) -> tuple[Any, tuple[Any, ...]]: ...

WGS84: EarthModel
GRS80: EarthModel

def _earth_model_from_constants(
    a: float, f: float, gm: float, omega: float, gamma_equator: float, gamma_pole: float, j2: float, preset: str
) -> EarthModel: ...

@final
class FrameMotion:
    """The motion of a child frame relative to a parent frame, possibly batched.

    The rotation maps child coordinates to parent coordinates; vectors are resolved in the
    parent. ``then`` composes (P→C then C→D gives P→D) and checks the optional labels.
    """

    def __new__(
        cls,
        *,
        rotation: Optional[ArrayLike] = None,
        position: Optional[ArrayLike] = None,
        velocity: Optional[ArrayLike] = None,
        acceleration: Optional[ArrayLike] = None,
        angular_velocity: Optional[ArrayLike] = None,
        angular_acceleration: Optional[ArrayLike] = None,
        parent: Optional[str] = None,
        child: Optional[str] = None,
    ) -> FrameMotion: ...
    @property
    def shape(self) -> tuple[int, ...]: ...
    @property
    def parent(self) -> Optional[str]: ...
    @property
    def child(self) -> Optional[str]: ...
    @property
    def rotation(self) -> _Array: ...
    @property
    def rotation_matrix(self) -> _Array: ...
    @property
    def position(self) -> _Array: ...
    @property
    def velocity(self) -> _Array: ...
    @property
    def acceleration(self) -> _Array: ...
    @property
    def angular_velocity(self) -> _Array: ...
    @property
    def angular_acceleration(self) -> _Array: ...
    @property
    def angular_velocity_in_child(self) -> _Array: ...
    @property
    def angular_acceleration_in_child(self) -> _Array: ...
    @overload
    def then(self, other: FrameMotion, *, jacobian: Literal[False] = False, out: None = None, threads: int = 1) -> FrameMotion: ...
    @overload
    def then(self, other: FrameMotion, *, jacobian: Literal[True], out: None = None, threads: int = 1) -> tuple[FrameMotion, _Array, _Array]: ...
    @overload
    def inverse(self, *, jacobian: Literal[False] = False) -> FrameMotion: ...
    @overload
    def inverse(self, *, jacobian: Literal[True]) -> tuple[FrameMotion, _Array]: ...
    @overload
    def map_point(
        self,
        position: ArrayLike,
        velocity: Optional[ArrayLike] = None,
        acceleration: Optional[ArrayLike] = None,
        *,
        jacobian: Literal[False] = False,
        out: _Out = None,
        threads: int = 1,
    ) -> tuple[_Array, _Array, _Array]: ...
    @overload
    def map_point(
        self,
        position: ArrayLike,
        velocity: Optional[ArrayLike] = None,
        acceleration: Optional[ArrayLike] = None,
        *,
        jacobian: Literal[True],
        out: None = None,
        threads: int = 1,
    ) -> tuple[_Array, _Array, _Array, _Array, _Array]: ...
    def map_vector(self, v: ArrayLike, *, out: _Out = None, threads: int = 1) -> _Array: ...
    def isclose(self, other: object, *, rtol: float = 1e-12, atol: float = 1e-12) -> bool: ...
    def __eq__(self, other: object, /) -> bool: ...
    def __len__(self) -> int: ...
    def __getitem__(self, index: Union[int, slice], /) -> FrameMotion: ...
    def __reduce__(self) -> tuple[Any, tuple[Any, ...]]: ...

def _frame_motion_from_parts(
    rotation: ArrayLike,
    position: ArrayLike,
    velocity: ArrayLike,
    acceleration: ArrayLike,
    angular_velocity: ArrayLike,
    angular_acceleration: ArrayLike,
    parent: Optional[str],
    child: Optional[str],
) -> FrameMotion: ...

@final
class ApparentAcceleration:
    """Apparent accelerations, each ``(..., 3)`` and resolved in the moving frame (m/s²)."""

    @property
    def translational(self) -> _Array: ...
    @property
    def coriolis(self) -> _Array: ...
    @property
    def centrifugal(self) -> _Array: ...
    @property
    def euler(self) -> _Array: ...
    @property
    def total(self) -> _Array: ...

@overload
def apparent_acceleration(
    angular_velocity: ArrayLike,
    position: ArrayLike,
    velocity: Optional[ArrayLike] = None,
    *,
    angular_acceleration: Optional[ArrayLike] = None,
    origin_acceleration: Optional[ArrayLike] = None,
    jacobian: Literal[False] = False,
    out: _Out = None,
    threads: int = 1,
) -> ApparentAcceleration: ...
@overload
def apparent_acceleration(
    angular_velocity: ArrayLike,
    position: ArrayLike,
    velocity: Optional[ArrayLike] = None,
    *,
    angular_acceleration: Optional[ArrayLike] = None,
    origin_acceleration: Optional[ArrayLike] = None,
    jacobian: Literal[True],
    out: None = None,
    threads: int = 1,
) -> tuple[ApparentAcceleration, dict[str, _Array]]: ...
def earth_motion(t: ArrayLike, *, angle_at_epoch: float = 0.0, model: Optional[EarthModel] = None) -> FrameMotion: ...
def local_level_motion(
    lat: ArrayLike,
    lon: ArrayLike,
    h: ArrayLike,
    v_ned: Optional[ArrayLike] = None,
    a_ned: Optional[ArrayLike] = None,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
) -> FrameMotion: ...
@overload
def geodetic_to_ecef(
    lat: ArrayLike,
    lon: ArrayLike,
    h: ArrayLike,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
    jacobian: Literal[False] = False,
    out: _Out = None,
    threads: int = 1,
) -> _Array: ...
@overload
def geodetic_to_ecef(
    lat: ArrayLike,
    lon: ArrayLike,
    h: ArrayLike,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
    jacobian: Literal[True],
    out: None = None,
    threads: int = 1,
) -> tuple[_Array, _Array]: ...
@overload
def ecef_to_geodetic(
    xyz: ArrayLike, *, model: Optional[EarthModel] = None, degrees: bool = False, jacobian: Literal[False] = False
, out: _Out = None, threads: int = 1) -> tuple[_FloatOrArray, _FloatOrArray, _FloatOrArray]: ...
@overload
def ecef_to_geodetic(
    xyz: ArrayLike, *, model: Optional[EarthModel] = None, degrees: bool = False, jacobian: Literal[True]
, out: None = None, threads: int = 1) -> tuple[_FloatOrArray, _FloatOrArray, _FloatOrArray, _Array]: ...
@overload
def ned_from_ecef(lat: ArrayLike, lon: ArrayLike, *, degrees: bool = False, jacobian: Literal[False] = False, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def ned_from_ecef(lat: ArrayLike, lon: ArrayLike, *, degrees: bool = False, jacobian: Literal[True], out: None = None, threads: int = 1) -> tuple[_Array, _Array]: ...
@overload
def enu_from_ecef(lat: ArrayLike, lon: ArrayLike, *, degrees: bool = False, jacobian: Literal[False] = False, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def enu_from_ecef(lat: ArrayLike, lon: ArrayLike, *, degrees: bool = False, jacobian: Literal[True], out: None = None, threads: int = 1) -> tuple[_Array, _Array]: ...
def radii_of_curvature(
    lat: ArrayLike, *, model: Optional[EarthModel] = None, degrees: bool = False
, out: _Out = None, threads: int = 1) -> tuple[_FloatOrArray, _FloatOrArray]: ...
@overload
def normal_gravity(
    lat: ArrayLike,
    h: Optional[ArrayLike] = None,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
    jacobian: Literal[False] = False,
    out: _Out = None,
    threads: int = 1,
) -> _FloatOrArray: ...
@overload
def normal_gravity(
    lat: ArrayLike,
    h: Optional[ArrayLike] = None,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
    jacobian: Literal[True],
    out: None = None,
    threads: int = 1,
) -> tuple[_FloatOrArray, _Array]: ...
def schuler_period(
    lat: ArrayLike,
    h: Optional[ArrayLike] = None,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
    out: _Out = None,
    threads: int = 1,
) -> _FloatOrArray: ...
def gravity_ned(
    lat: ArrayLike, h: Optional[ArrayLike] = None, *, model: Optional[EarthModel] = None, degrees: bool = False
, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def gravitation_ecef(xyz: ArrayLike, *, model: Optional[EarthModel] = None, jacobian: Literal[False] = False, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def gravitation_ecef(xyz: ArrayLike, *, model: Optional[EarthModel] = None, jacobian: Literal[True], out: None = None, threads: int = 1) -> tuple[_Array, _Array]: ...
@overload
def gravity_ecef(xyz: ArrayLike, *, model: Optional[EarthModel] = None, jacobian: Literal[False] = False, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def gravity_ecef(xyz: ArrayLike, *, model: Optional[EarthModel] = None, jacobian: Literal[True], out: None = None, threads: int = 1) -> tuple[_Array, _Array]: ...
def centripetal_acceleration_ecef(xyz: ArrayLike, *, model: Optional[EarthModel] = None, out: _Out = None, threads: int = 1) -> _Array: ...
def earth_rate_ned(lat: ArrayLike, *, model: Optional[EarthModel] = None, degrees: bool = False, out: _Out = None, threads: int = 1) -> _Array: ...
def transport_rate_ned(
    lat: ArrayLike, h: ArrayLike, v_ned: ArrayLike, *, model: Optional[EarthModel] = None, degrees: bool = False
, out: _Out = None, threads: int = 1) -> _Array: ...
def coriolis_ned(
    lat: ArrayLike, h: ArrayLike, v_ned: ArrayLike, *, model: Optional[EarthModel] = None, degrees: bool = False
, out: _Out = None, threads: int = 1) -> _Array: ...
def eotvos_correction(
    lat: ArrayLike,
    v_ned: ArrayLike,
    h: Optional[ArrayLike] = None,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
    out: _Out = None,
    threads: int = 1,
) -> _FloatOrArray: ...
def coriolis_parameter(lat: ArrayLike, *, model: Optional[EarthModel] = None, degrees: bool = False, out: _Out = None, threads: int = 1) -> _FloatOrArray: ...
def earth_rotation_angle(jd_ut1: ArrayLike, jd_ut1_fraction: Optional[ArrayLike] = None, *, out: _Out = None, threads: int = 1) -> _FloatOrArray: ...
@overload
def quat_from_euler(
    yaw: ArrayLike, pitch: ArrayLike, roll: ArrayLike, *, degrees: bool = False, jacobian: Literal[False] = False
, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def quat_from_euler(
    yaw: ArrayLike, pitch: ArrayLike, roll: ArrayLike, *, degrees: bool = False, jacobian: Literal[True]
, out: None = None, threads: int = 1) -> tuple[_Array, _Array]: ...
@overload
def euler_from_quat(
    q: ArrayLike, *, degrees: bool = False, jacobian: Literal[False] = False
, out: _Out = None, threads: int = 1) -> tuple[_FloatOrArray, _FloatOrArray, _FloatOrArray]: ...
@overload
def euler_from_quat(
    q: ArrayLike, *, degrees: bool = False, jacobian: Literal[True]
, out: None = None, threads: int = 1) -> tuple[_FloatOrArray, _FloatOrArray, _FloatOrArray, _Array]: ...
def quat_to_matrix(q: ArrayLike, *, out: _Out = None, threads: int = 1) -> _Array: ...
def matrix_to_quat(m: ArrayLike, *, out: _Out = None, threads: int = 1) -> _Array: ...
def quat_multiply(p: ArrayLike, q: ArrayLike, *, out: _Out = None, threads: int = 1) -> _Array: ...
def quat_inverse(q: ArrayLike, *, out: _Out = None, threads: int = 1) -> _Array: ...
def quat_rotate(q: ArrayLike, v: ArrayLike, *, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def quat_from_rotvec(v: ArrayLike, *, jacobian: Literal[False] = False, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def quat_from_rotvec(v: ArrayLike, *, jacobian: Literal[True], out: None = None, threads: int = 1) -> tuple[_Array, _Array]: ...
@overload
def quat_to_rotvec(q: ArrayLike, *, jacobian: Literal[False] = False, out: _Out = None, threads: int = 1) -> _Array: ...
@overload
def quat_to_rotvec(q: ArrayLike, *, jacobian: Literal[True], out: None = None, threads: int = 1) -> tuple[_Array, _Array]: ...
def discrete_error_model(
    F: ArrayLike, G: ArrayLike, noise: Union[ImuErrors, ArrayLike], dt: float, *, method: Literal["exact", "second_order"] = "exact"
) -> tuple[_Array, _Array]: ...
def predict_covariance(
    history: StrapdownHistory, imu_errors: ImuErrors, P0: ArrayLike, *, every: int = 1
) -> tuple[_Array, _Array]: ...

_Gravity = Literal["normal", "j2"]

def ideal_imu(
    body_motion: FrameMotion, *, model: Optional[EarthModel] = None, gravity: _Gravity = "normal"
) -> tuple[_Array, _Array]: ...
def imu_increments(
    trajectory: Callable[[_Array], FrameMotion],
    t: ArrayLike,
    *,
    model: Optional[EarthModel] = None,
    gravity: _Gravity = "normal",
) -> tuple[_Array, _Array, _Array]: ...
def imu_increments_from_samples(
    t: ArrayLike,
    lat: ArrayLike,
    lon: ArrayLike,
    h: ArrayLike,
    attitude: ArrayLike,
    *,
    times: Optional[ArrayLike] = None,
    model: Optional[EarthModel] = None,
    gravity: _Gravity = "normal",
    degrees: bool = False,
) -> tuple[_Array, _Array, _Array]: ...
def increments_from_rates(
    t: ArrayLike, angular_rate: ArrayLike, specific_force: ArrayLike, *, max_gap: Optional[float] = None
) -> tuple[_Array, _Array]: ...
def motion_from_samples(
    t: ArrayLike,
    lat: ArrayLike,
    lon: ArrayLike,
    h: ArrayLike,
    attitude: ArrayLike,
    times: ArrayLike,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
) -> FrameMotion: ...
def run_strapdowns(
    strapdowns: Sequence[Strapdown],
    dtheta: ArrayLike,
    dv: ArrayLike,
    dt: ArrayLike,
    *,
    height_reference: Optional[ArrayLike] = None,
    threads: int = 1,
    progress: Optional[Callable[[int, int], object]] = None,
) -> list[StrapdownHistory]: ...
def lever_arm_state(
    lat: ArrayLike,
    lon: ArrayLike,
    h: ArrayLike,
    v_ned: ArrayLike,
    attitude: ArrayLike,
    angular_rate: ArrayLike,
    lever_arm: ArrayLike,
    *,
    model: Optional[EarthModel] = None,
    degrees: bool = False,
    out: _Out = None,
    threads: int = 1,
) -> tuple[_FloatOrArray, _FloatOrArray, _FloatOrArray, _Array]: ...

@final
class StrapdownHistory:
    """The state after every step of ``Strapdown.run``."""

    @property
    def lat(self) -> _Array: ...
    @property
    def lon(self) -> _Array: ...
    @property
    def h(self) -> _Array: ...
    @property
    def v_ned(self) -> _Array: ...
    @property
    def attitude(self) -> _Array: ...
    @property
    def t(self) -> _Array: ...
    def __len__(self) -> int: ...

@final
class Strapdown:
    """Strapdown inertial navigation in NED (``frame="ned"``) or ECEF (``frame="ecef"``) form.

    Not certified for safety-of-life navigation; validate against your own requirements.
    """

    def __new__(
        cls,
        lat: float,
        lon: float,
        h: float,
        v_ned: ArrayLike,
        attitude: ArrayLike,
        *,
        frame: Literal["ned", "ecef"] = "ned",
        model: Optional[EarthModel] = None,
        degrees: bool = False,
        gravity: _Gravity = "normal",
        vertical: Literal["free", "hold", "aided"] = "free",
        height_time_constant: Optional[float] = None,
    ) -> Strapdown: ...
    def set_state(self, lat: float, lon: float, h: float, v_ned: ArrayLike, attitude: ArrayLike) -> None: ...
    def step(self, dtheta: ArrayLike, dv: ArrayLike, dt: ArrayLike, *, height_reference: Optional[float] = None) -> None: ...
    def run(
        self,
        dtheta: ArrayLike,
        dv: ArrayLike,
        dt: ArrayLike,
        *,
        height_reference: Optional[ArrayLike] = None,
        progress: Optional[Callable[[int, int], object]] = None,
    ) -> StrapdownHistory: ...
    def error_model(
        self, specific_force: ArrayLike, angular_rate: ArrayLike, *, states: int = 15, imu_errors: Optional[ImuErrors] = None
    ) -> tuple[_Array, _Array]: ...
    def set_height_reference(self, height_reference: float) -> None: ...
    def reset_history(self) -> None: ...
    @property
    def lat(self) -> float: ...
    @property
    def lon(self) -> float: ...
    @property
    def h(self) -> float: ...
    @property
    def v_ned(self) -> _Array: ...
    @property
    def attitude(self) -> _Array: ...
    @property
    def position_ecef(self) -> _Array: ...
    @property
    def elapsed(self) -> float: ...
    @property
    def frame(self) -> str: ...
    @property
    def gravity(self) -> str: ...
    @property
    def vertical(self) -> str: ...
    @property
    def degrees(self) -> bool: ...
    @property
    def model(self) -> EarthModel: ...
    def copy(self) -> Strapdown: ...
    def __copy__(self) -> Strapdown: ...
    def __deepcopy__(self, memo: Any, /) -> Strapdown: ...
    def __reduce__(self) -> tuple[Any, tuple[Any, ...]]: ...

def _strapdown_from_parts(
    model: EarthModel,
    frame: str,
    gravity: str,
    vertical: str,
    height_time_constant: Optional[float],
    degrees: bool,
    state: list[float],
    previous: Optional[list[float]],
    height_reference: float,
    elapsed: float,
    elapsed_correction: float,
) -> Strapdown: ...

@final
class ImuErrors:
    """Seeded IMU sensor errors: bias, scale factor, misalignment, white noise, Gauss–Markov bias."""

    def __new__(
        cls,
        *,
        gyro_bias: Optional[ArrayLike] = None,
        gyro_scale_factor: Optional[ArrayLike] = None,
        gyro_misalignment: Optional[ArrayLike] = None,
        gyro_arw_deg_per_sqrt_h: Optional[ArrayLike] = None,
        gyro_markov_sigma: Optional[ArrayLike] = None,
        gyro_markov_time: Optional[ArrayLike] = None,
        accel_bias: Optional[ArrayLike] = None,
        accel_scale_factor: Optional[ArrayLike] = None,
        accel_misalignment: Optional[ArrayLike] = None,
        accel_vrw_mps_per_sqrt_h: Optional[ArrayLike] = None,
        accel_markov_sigma: Optional[ArrayLike] = None,
        accel_markov_time: Optional[ArrayLike] = None,
        seed: int = 0,
    ) -> ImuErrors: ...
    def apply(self, dtheta: ArrayLike, dv: ArrayLike, dt: ArrayLike) -> tuple[_Array, _Array]: ...
    @property
    def seed(self) -> int: ...
    @property
    def markov_states(self) -> tuple[_Array, _Array]: ...
    def __reduce__(self) -> tuple[Any, tuple[Any, ...]]: ...

def _imu_errors_from_parts(
    gyro: Sequence[float],
    accelerometer: Sequence[float],
    stream: Union[str, Sequence[int]],
    gyro_markov: Sequence[float],
    accelerometer_markov: Sequence[float],
    seed: int,
) -> ImuErrors: ...

@final
class FrameGraph:
    """A tree of named frames over time; see the README's frame-graph section."""

    def __new__(cls, root: str, *, inertial: bool = True) -> FrameGraph: ...
    def add_fixed(self, name: str, parent: str, *, rotation: Optional[ArrayLike] = None, position: Optional[ArrayLike] = None) -> None: ...
    def add_spin(
        self, name: str, parent: str, *, axis: ArrayLike, rate: float, angle_at_zero: float = 0.0, angular_acceleration: float = 0.0
    ) -> None: ...
    def add_earth(
        self,
        name: str,
        parent: str,
        *,
        angle_at_epoch: float = 0.0,
        model: Optional[EarthModel] = None,
        epoch_jd_ut1: Optional[ArrayLike] = None,
        eop: Optional[EarthOrientation] = None,
        epoch_jd_tt: Optional[ArrayLike] = None,
    ) -> None: ...
    def add_site(
        self,
        name: str,
        parent: str,
        lat: float,
        lon: float,
        h: float,
        *,
        axes: Literal["ned", "enu"] = "ned",
        model: Optional[EarthModel] = None,
        degrees: bool = False,
    ) -> None: ...
    def add_samples(
        self,
        name: str,
        parent: str,
        t: ArrayLike,
        position: ArrayLike,
        attitude: ArrayLike,
        *,
        position_kind: Literal["geodetic", "cartesian"] = "geodetic",
        degrees: bool = False,
        model: Optional[EarthModel] = None,
        velocity: Optional[ArrayLike] = None,
        angular_rate: Optional[ArrayLike] = None,
    ) -> None: ...
    def add_function(self, name: str, parent: str, fn: Callable[[_Array], FrameMotion]) -> None: ...
    def motion(self, parent: str, child: str, t: ArrayLike) -> FrameMotion: ...
    def map_point(
        self,
        frame_from: str,
        frame_to: str,
        t: ArrayLike,
        position: ArrayLike,
        velocity: Optional[ArrayLike] = None,
        acceleration: Optional[ArrayLike] = None,
    ) -> tuple[_Array, _Array, _Array]: ...
    def apparent_acceleration(self, frame: str, t: ArrayLike, position: ArrayLike, velocity: Optional[ArrayLike] = None) -> ApparentAcceleration: ...
    @property
    def frames(self) -> list[str]: ...
    @property
    def root(self) -> str: ...
    @property
    def inertial(self) -> bool: ...
    def parent_of(self, name: str) -> Optional[str]: ...
    def kind_of(self, name: str) -> str: ...
    def path(self, a: str, b: str) -> list[str]: ...
    def to_toml(self) -> str: ...
    @staticmethod
    def from_toml(text: str) -> FrameGraph: ...
    def __contains__(self, key: str, /) -> bool: ...
    def __len__(self) -> int: ...
    def __reduce__(self) -> tuple[Any, ...]: ...

def _frame_graph_from_parts(toml: str, samples: list[Any], iers: Optional[list[Any]] = None) -> FrameGraph: ...

@final
class Drag:
    """Quadratic aerodynamic drag per unit mass, a built-in force for ``propagate``."""

    def __new__(
        cls,
        ballistic_coefficient: float,
        *,
        density: float = 1.225,
        scale_height: Optional[float] = None,
        up: Optional[ArrayLike] = None,
        wind: Optional[ArrayLike] = None,
    ) -> Drag: ...
    def acceleration(self, position: ArrayLike, velocity: ArrayLike) -> _Array: ...
    @property
    def ballistic_coefficient(self) -> float: ...

@final
class DeflectionBudget:
    """First-order displacement caused by each apparent term by the end of a run (m)."""

    @property
    def translational(self) -> _Array: ...
    @property
    def coriolis(self) -> _Array: ...
    @property
    def centrifugal(self) -> _Array: ...
    @property
    def euler(self) -> _Array: ...
    @property
    def total(self) -> _Array: ...
    @property
    def velocity(self) -> _Array: ...
    @property
    def north_east_down(self) -> _Array: ...

@final
class Propagation:
    """A propagated trajectory with its dense output."""

    @property
    def t(self) -> _Array: ...
    @property
    def position(self) -> _Array: ...
    @property
    def velocity(self) -> _Array: ...
    @property
    def event_time(self) -> Optional[float]: ...
    @property
    def budget(self) -> Optional[DeflectionBudget]: ...
    @property
    def steps(self) -> int: ...
    @property
    def evaluations(self) -> int: ...
    def sample(self, t: ArrayLike) -> tuple[_Array, _Array]: ...

def propagate(
    frame_motion: Union[Callable[[float], FrameMotion], tuple[FrameGraph, str]],
    t_span: ArrayLike,
    position: ArrayLike,
    velocity: ArrayLike,
    *,
    gravity: Optional[Literal["point", "j2"]] = "point",
    force: Union[None, Drag, Callable[[float, _Array, _Array], ArrayLike]] = None,
    rtol: float = 1e-10,
    atol: float = 1e-9,
    max_step: Optional[float] = None,
    stop_height: Optional[float] = None,
    stop_fn: Optional[Callable[[float, _Array, _Array], float]] = None,
    budget: bool = False,
    model: Optional[EarthModel] = None,
    apparent: Optional[Sequence[Literal["translational", "coriolis", "centrifugal", "euler"]]] = None,
    max_steps: int = 1000000,
) -> Propagation: ...

@final
class Calibration:
    """The calibration of one sensor triad: bias, scale factors, misalignment, covariance, residuals."""

    @property
    def sensor(self) -> Literal["accelerometer", "gyro"]: ...
    @property
    def bias(self) -> _Array: ...
    @property
    def scale_factor(self) -> _Array: ...
    @property
    def misalignment(self) -> _Array: ...
    @property
    def covariance(self) -> _Array: ...
    @property
    def parameters(self) -> _Array: ...
    @property
    def standard_deviations(self) -> _Array: ...
    @property
    def parameter_names(self) -> list[str]: ...
    @property
    def estimated(self) -> list[str]: ...
    @property
    def residuals(self) -> _Array: ...
    @property
    def residual_rms(self) -> _Array: ...
    @property
    def noise(self) -> _Array: ...
    @property
    def degrees_of_freedom(self) -> int: ...
    @property
    def condition_number(self) -> float: ...
    def to_imu_errors(self, other: Optional[Calibration] = None, *, seed: int = 0) -> ImuErrors: ...
    def correct(self, dtheta: ArrayLike, dv: ArrayLike, dt: ArrayLike, other: Optional[Calibration] = None) -> tuple[_Array, _Array]: ...
    def __reduce__(self) -> tuple[Any, tuple[Any, ...]]: ...

def _calibration_from_parts(
    sensor: str, numbers: Sequence[float], degrees_of_freedom: int, estimated: int, residuals: Sequence[float], residual_width: int
) -> Calibration: ...

def calibrate_accelerometers(
    attitude: ArrayLike,
    specific_force: ArrayLike,
    *,
    lat: float,
    h: float,
    degrees: bool = False,
    model: Optional[EarthModel] = None,
    noise: Optional[ArrayLike] = None,
    parameters: Literal["full", "bias_scale", "bias"] = "full",
    gravity: Literal["normal", "j2"] = "normal",
) -> Calibration: ...
def calibrate_accelerometers_by_magnitude(
    specific_force: ArrayLike,
    *,
    lat: float,
    h: float,
    degrees: bool = False,
    model: Optional[EarthModel] = None,
    noise: Optional[ArrayLike] = None,
    gravity: Literal["normal", "j2"] = "normal",
) -> Calibration: ...
def calibrate_gyros(
    attitude: ArrayLike,
    angular_rate: ArrayLike,
    *,
    lat: float,
    h: float = 0.0,
    table_rate: Optional[ArrayLike] = None,
    table_axis: Optional[ArrayLike] = None,
    duration: Optional[ArrayLike] = None,
    degrees: bool = False,
    model: Optional[EarthModel] = None,
    noise: Optional[ArrayLike] = None,
    parameters: Literal["full", "bias_scale", "bias"] = "full",
) -> Calibration: ...
def allan_deviation(
    samples: ArrayLike, dt: float, *, taus: Optional[ArrayLike] = None, confidence: float = 0.683
) -> tuple[_Array, _Array, _Array, _Array]: ...

@final
class NoiseTerms:
    """White noise, bias instability and rate random walk fitted to an Allan-deviation curve."""

    @property
    def white_noise(self) -> _FloatOrArray: ...
    @property
    def bias_instability(self) -> _FloatOrArray: ...
    @property
    def rate_random_walk(self) -> _FloatOrArray: ...
    @property
    def arw_deg_per_sqrt_h(self) -> _FloatOrArray: ...
    @property
    def bias_instability_deg_per_h(self) -> _FloatOrArray: ...
    @property
    def rrw_deg_per_h_per_sqrt_h(self) -> _FloatOrArray: ...
    @property
    def vrw_mps_per_sqrt_h(self) -> _FloatOrArray: ...
    @property
    def bias_instability_ug(self) -> _FloatOrArray: ...
    @property
    def acceleration_random_walk_mps_per_h_per_sqrt_h(self) -> _FloatOrArray: ...
    def deviation(self, tau: ArrayLike) -> _FloatOrArray: ...

def fit_noise_terms(taus: ArrayLike, adev: ArrayLike, *, dof: Optional[ArrayLike] = None) -> NoiseTerms: ...


# Aided navigation

@disjoint_base
class MeasurementSet:
    """Measurements of one kind at strictly increasing times (the base of the sets below)."""

    @property
    def t(self) -> _Array: ...
    @property
    def kind(self) -> str: ...
    @property
    def rows(self) -> int: ...
    def __len__(self) -> int: ...
    def __reduce__(self) -> tuple[Any, ...]: ...

@final
class PositionFixes(MeasurementSet):
    """GNSS position fixes (geodetic) with 1σ north, east, down (m) at an antenna lever arm."""

    def __new__(
        cls,
        t: ArrayLike,
        lat: ArrayLike,
        lon: ArrayLike,
        h: ArrayLike,
        sigma: ArrayLike,
        *,
        lever_arm: Optional[ArrayLike] = None,
        degrees: bool = False,
    ) -> PositionFixes: ...

@final
class VelocityFixes(MeasurementSet):
    """GNSS velocity fixes (NED, m/s) at an antenna lever arm."""

    def __new__(cls, t: ArrayLike, v_ned: ArrayLike, sigma: ArrayLike, *, lever_arm: Optional[ArrayLike] = None) -> VelocityFixes: ...

@final
class ZeroVelocity(MeasurementSet):
    """Zero-velocity updates (m/s per NED axis)."""

    def __new__(cls, t: ArrayLike, sigma: ArrayLike) -> ZeroVelocity: ...

@final
class ZeroAngularRate(MeasurementSet):
    """Zero-angular-rate updates (rad/s per body axis)."""

    def __new__(cls, t: ArrayLike, sigma: ArrayLike) -> ZeroAngularRate: ...

@final
class HeightFixes(MeasurementSet):
    """Ellipsoidal heights (m)."""

    def __new__(cls, t: ArrayLike, h: ArrayLike, sigma: ArrayLike) -> HeightFixes: ...

@final
class HeadingFixes(MeasurementSet):
    """True headings, or magnetic headings plus ``declination``."""

    def __new__(
        cls, t: ArrayLike, heading: ArrayLike, sigma: ArrayLike, *, degrees: bool = False, declination: Optional[ArrayLike] = None
    ) -> HeadingFixes: ...

@final
class VehicleConstraint(MeasurementSet):
    """The land-vehicle constraint: no lateral or vertical velocity in vehicle axes."""

    def __new__(
        cls, t: ArrayLike, sigma: ArrayLike, *, mounting: Optional[ArrayLike] = None, lever_arm: Optional[ArrayLike] = None
    ) -> VehicleConstraint: ...

@final
class OdometerSpeeds(MeasurementSet):
    """Odometer forward speeds (m/s) in vehicle axes at a lever arm."""

    def __new__(
        cls,
        t: ArrayLike,
        speed: ArrayLike,
        sigma: ArrayLike,
        *,
        mounting: Optional[ArrayLike] = None,
        lever_arm: Optional[ArrayLike] = None,
    ) -> OdometerSpeeds: ...

@final
class InnovationLog:
    """One measurement set's innovations over a run."""

    def __new__(cls, kind: str, t: Any, innovation: Any, std: Any, nis: Any, accepted: Any) -> InnovationLog: ...
    @property
    def kind(self) -> str: ...
    @property
    def t(self) -> _Array: ...
    @property
    def innovation(self) -> _Array: ...
    @property
    def std(self) -> _Array: ...
    @property
    def nis(self) -> _Array: ...
    @property
    def accepted(self) -> NDArray[np.bool_]: ...
    def __reduce__(self) -> tuple[Any, ...]: ...

@final
class AidedResult:
    """The filtered trajectory, its 1σ, sensor errors, epoch covariances and innovations; with
    `smooth=True` also the smoothed solution (an `AidedResult`)."""

    def __new__(
        cls,
        t: Any,
        lat: Any,
        lon: Any,
        h: Any,
        v_ned: Any,
        attitude: Any,
        sigma: Any,
        imu_errors: Any,
        epochs: Any,
        covariance: Any,
        innovations: Any,
        smoothed: Optional[AidedResult] = None,
        source: Any = None,
        run: Any = None,
    ) -> AidedResult: ...
    @property
    def t(self) -> _Array: ...
    @property
    def lat(self) -> _Array: ...
    @property
    def lon(self) -> _Array: ...
    @property
    def h(self) -> _Array: ...
    @property
    def v_ned(self) -> _Array: ...
    @property
    def attitude(self) -> _Array: ...
    @property
    def sigma(self) -> _Array: ...
    @property
    def imu_errors(self) -> _Array: ...
    @property
    def epochs(self) -> _Array: ...
    @property
    def covariance(self) -> _Array: ...
    @property
    def innovations(self) -> list[InnovationLog]: ...
    @property
    def smoothed(self) -> Optional[AidedResult]: ...
    def at(self, times: ArrayLike) -> SolutionAt: ...
    def budget(self, states: Optional[Sequence[int]] = None) -> ErrorBudget: ...

@final
class ErrorBudget:
    """The error budget of an aided run by source (`AidedResult.budget`): each requested state's
    variance at every IMU time split into the initial uncertainty of each state group, each IMU
    noise term and each measurement set, with the gains of the run."""

    def __new__(
        cls,
        t: Any,
        states: Any,
        sources: Any,
        filtered: Any,
        filtered_total: Any,
        smoothed: Any = None,
        smoothed_total: Any = None,
    ) -> ErrorBudget: ...
    @property
    def t(self) -> _Array: ...
    @property
    def states(self) -> tuple[int, ...]: ...
    @property
    def sources(self) -> tuple[str, ...]: ...
    @property
    def filtered(self) -> _Array: ...
    @property
    def filtered_total(self) -> _Array: ...
    @property
    def smoothed(self) -> Optional[_Array]: ...
    @property
    def smoothed_total(self) -> Optional[_Array]: ...
    def __reduce__(self) -> tuple[Any, ...]: ...

@final
class SolutionAt:
    """The smoothed, or else the filtered, solution at requested times (`AidedResult.at`)."""

    def __new__(
        cls, t: Any, lat: Any, lon: Any, h: Any, v_ned: Any, attitude: Any, sigma: Any, imu_errors: Any
    ) -> SolutionAt: ...
    @property
    def t(self) -> _Array: ...
    @property
    def lat(self) -> _Array: ...
    @property
    def lon(self) -> _Array: ...
    @property
    def h(self) -> _Array: ...
    @property
    def v_ned(self) -> _Array: ...
    @property
    def attitude(self) -> _Array: ...
    @property
    def sigma(self) -> _Array: ...
    @property
    def imu_errors(self) -> _Array: ...
    def __reduce__(self) -> tuple[Any, ...]: ...

@final
class AidedNavigator:
    """A closed-loop error-state Kalman filter around a strapdown stepper.

    Not certified for safety-of-life navigation; validate against your own requirements.
    """

    def __new__(
        cls,
        strapdown: Strapdown,
        imu: ImuErrors,
        p0: ArrayLike,
        *,
        states: int = 15,
        gate: Optional[float] = ...,
        propagate_every: int = 1,
    ) -> AidedNavigator: ...
    def run(
        self,
        t: ArrayLike,
        dtheta: ArrayLike,
        dv: ArrayLike,
        measurements: Sequence[MeasurementSet],
        *,
        smooth: bool = False,
        progress: Optional[Callable[[int, int], object]] = None,
    ) -> AidedResult: ...
    @property
    def state(self) -> tuple[float, float, float, _Array, _Array]: ...
    @property
    def strapdown(self) -> Strapdown: ...
    @property
    def covariance(self) -> _Array: ...
    @property
    def imu_errors(self) -> _Array: ...
    @property
    def time(self) -> Optional[float]: ...
    @property
    def states(self) -> int: ...
    def __reduce__(self) -> tuple[Any, ...]: ...

@final
class Alignment:
    """A stationary alignment: attitude (w, x, y, z, body to NED) and roll, pitch, heading 1σ (rad)."""

    def __new__(cls, attitude: Any, sigma: Any) -> Alignment: ...
    @property
    def attitude(self) -> _Array: ...
    @property
    def sigma(self) -> _Array: ...
    def __reduce__(self) -> tuple[Any, ...]: ...

def align_stationary(
    dtheta: ArrayLike,
    dv: ArrayLike,
    dt: ArrayLike,
    lat: float,
    h: float,
    *,
    degrees: bool = False,
    imu: Optional[ImuErrors] = None,
    heading: Optional[Union[float, tuple[float, float]]] = None,
    model: Optional[EarthModel] = None,
) -> Alignment: ...
def heading_from_course(v_ned: ArrayLike, sigma: float, *, min_speed: float = 2.0, degrees: bool = False) -> tuple[float, float]: ...
def _measurement_set_from_parts(kind: str, times: Sequence[float], records: Sequence[float]) -> MeasurementSet: ...
def _aided_navigator_from_parts(
    strapdown: Strapdown,
    imu: ImuErrors,
    covariance: Sequence[float],
    states: int,
    gate: Optional[float],
    propagate_every: int,
    memory: Sequence[float],
    time: Optional[float],
) -> AidedNavigator: ...
