//! Earth models, geodesy, local-level frames, Earth rotation, gravity and field quantities.

use rotaframe::earth::{self, EarthModel, Geodetic};
use rotaframe::nalgebra::Vector3;

use crate::status::{Fallible, boundary, disjoint, distinct_outputs, out, read, region, rf_status, slice, slice_mut};
use crate::types::{put_row_major, rf_earth_model, rf_frame_motion, rf_geodetic, rf_vec3};

/// The validated model behind a C pointer.
///
/// # Safety
/// `m` is NULL or points to a valid `rf_earth_model`.
pub(crate) unsafe fn core_model(m: *const rf_earth_model) -> Fallible<EarthModel> {
    // SAFETY: the caller guarantees validity when non-NULL; read in place, not copied.
    unsafe { m.as_ref() }.ok_or(crate::status::RF_STATUS_NULL_POINTER)?.to_core()
}

/// Writes the WGS 84 model (NIMA TR8350.2).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_model_wgs84(out_model: *mut rf_earth_model) -> rf_status {
    boundary(|| {
        *unsafe { out(out_model) }? = (&earth::WGS84).into();
        Ok(())
    })
}

/// Writes the GRS 80 model (Moritz 2000).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_model_grs80(out_model: *mut rf_earth_model) -> rf_status {
    boundary(|| {
        *unsafe { out(out_model) }? = (&earth::GRS80).into();
        Ok(())
    })
}

/// A level ellipsoid from its four defining constants; normal gravity and J2 are derived.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_model_from_defining_constants(
    semi_major_axis: f64,
    flattening: f64,
    gm: f64,
    rotation_rate: f64,
    out_model: *mut rf_earth_model,
) -> rf_status {
    boundary(|| {
        let out_model = unsafe { out(out_model) }?;
        *out_model = (&EarthModel::from_defining_constants(semi_major_axis, flattening, gm, rotation_rate)?).into();
        Ok(())
    })
}

/// A model with every constant given (Somigliana's k is derived from the gravity values).
#[unsafe(no_mangle)]
#[allow(clippy::too_many_arguments)]
pub unsafe extern "C" fn rf_earth_model_custom(
    semi_major_axis: f64,
    flattening: f64,
    gm: f64,
    rotation_rate: f64,
    gamma_equator: f64,
    gamma_pole: f64,
    j2: f64,
    out_model: *mut rf_earth_model,
) -> rf_status {
    boundary(|| {
        let out_model = unsafe { out(out_model) }?;
        let m = EarthModel::custom(semi_major_axis, flattening, gm, rotation_rate, gamma_equator, gamma_pole, j2)?;
        *out_model = (&m).into();
        Ok(())
    })
}

/// ECEF coordinates (m) of a geodetic position.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_geodetic_to_ecef(
    model: *const rf_earth_model,
    position: *const rf_geodetic,
    out_ecef: *mut rf_vec3,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let p: Geodetic = unsafe { read(position) }?.into();
        let out_ecef = unsafe { out(out_ecef) }?;
        *out_ecef = earth::geodetic_to_ecef(&m, &p)?.into();
        Ok(())
    })
}

/// Geodetic position of an ECEF point (m). On the polar axis longitude is 0.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_ecef_to_geodetic(
    model: *const rf_earth_model,
    ecef: *const rf_vec3,
    out_position: *mut rf_geodetic,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let x: Vector3<f64> = unsafe { read(ecef) }?.into();
        let out_position = unsafe { out(out_position) }?;
        *out_position = earth::ecef_to_geodetic(&m, &x)?.into();
        Ok(())
    })
}

/// `count` geodetic positions to ECEF. Every input is validated before anything is written;
/// the arrays must not overlap (`RF_STATUS_OVERLAPPING_BUFFERS`; NULL allowed when `count`
/// is 0).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_geodetic_to_ecef_batch(
    model: *const rf_earth_model,
    positions: *const rf_geodetic,
    count: usize,
    out_ecef: *mut rf_vec3,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let positions = unsafe { slice(positions.cast::<Geodetic>(), count) }?;
        disjoint(region(out_ecef, count), &[region(positions.as_ptr(), count), region(model, 1)])?;
        let out_ecef = unsafe { slice_mut(out_ecef.cast::<[f64; 3]>(), count) }?;
        earth::geodetic_to_ecef_many(&m, positions, out_ecef)?;
        Ok(())
    })
}

/// `count` ECEF points to geodetic positions. Every input is validated before anything is
/// written; the arrays must not overlap (`RF_STATUS_OVERLAPPING_BUFFERS`; NULL allowed when `count`
/// is 0).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_ecef_to_geodetic_batch(
    model: *const rf_earth_model,
    ecef: *const rf_vec3,
    count: usize,
    out_positions: *mut rf_geodetic,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let ecef = unsafe { slice(ecef.cast::<[f64; 3]>(), count) }?;
        disjoint(region(out_positions, count), &[region(ecef.as_ptr(), count), region(model, 1)])?;
        let out_positions = unsafe { slice_mut(out_positions.cast::<Geodetic>(), count) }?;
        earth::ecef_to_geodetic_many(&m, ecef, out_positions)?;
        Ok(())
    })
}

/// Row-major `C_e^n` (ECEF to NED, `v_ned = C v_ecef`) at a latitude and longitude (rad),
/// written to `out_matrix[9]` (`out_matrix[3 * row + column]`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_ned_from_ecef(latitude: f64, longitude: f64, out_matrix: *mut f64) -> rf_status {
    boundary(|| {
        let out_matrix = unsafe { slice_mut(out_matrix, 9) }?;
        put_row_major(out_matrix, &earth::ned_from_ecef(latitude, longitude)?);
        Ok(())
    })
}

/// Row-major `C_e^enu` (ECEF to ENU) at a latitude and longitude (rad), written to
/// `out_matrix[9]`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_enu_from_ecef(latitude: f64, longitude: f64, out_matrix: *mut f64) -> rf_status {
    boundary(|| {
        let out_matrix = unsafe { slice_mut(out_matrix, 9) }?;
        put_row_major(out_matrix, &earth::enu_from_ecef(latitude, longitude)?);
        Ok(())
    })
}

/// Meridian and prime-vertical radii of curvature (m) at a geodetic latitude (rad).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_radii_of_curvature(
    model: *const rf_earth_model,
    latitude: f64,
    out_meridian: *mut f64,
    out_prime_vertical: *mut f64,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        distinct_outputs(&[region(out_meridian, 1), region(out_prime_vertical, 1)])?;
        let (om, on) = (unsafe { out(out_meridian) }?, unsafe { out(out_prime_vertical) }?);
        let r = earth::radii_of_curvature(&m, latitude)?;
        (*om, *on) = (r.meridian, r.prime_vertical);
        Ok(())
    })
}

/// Earth rate resolved in NED (rad/s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_rate_ned(model: *const rf_earth_model, latitude: f64, out_rate: *mut rf_vec3) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let o = unsafe { out(out_rate) }?;
        *o = earth::earth_rate_ned(&m, latitude)?.into();
        Ok(())
    })
}

type VelocityFunction = fn(&EarthModel, f64, f64, &Vector3<f64>) -> rotaframe::Result<Vector3<f64>>;

unsafe fn at_velocity(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    velocity_ned: *const rf_vec3,
    out_vector: *mut rf_vec3,
    f: VelocityFunction,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let v: Vector3<f64> = unsafe { read(velocity_ned) }?.into();
        let o = unsafe { out(out_vector) }?;
        *o = f(&m, latitude, height, &v)?.into();
        Ok(())
    })
}

/// Transport rate (angular velocity of NED relative to the Earth) resolved in NED (rad/s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_transport_rate_ned(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    velocity_ned: *const rf_vec3,
    out_rate: *mut rf_vec3,
) -> rf_status {
    unsafe { at_velocity(model, latitude, height, velocity_ned, out_rate, earth::transport_rate_ned) }
}

/// The Coriolis and transport-rate term `−(2 ω_ie + ω_en) × v` of the NED velocity equation.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_coriolis_ned(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    velocity_ned: *const rf_vec3,
    out_acceleration: *mut rf_vec3,
) -> rf_status {
    unsafe { at_velocity(model, latitude, height, velocity_ned, out_acceleration, earth::coriolis_ned) }
}

/// The NED frame carried by a vehicle, relative to ECEF (acceleration relative to the Earth,
/// resolved in NED; see the core documentation).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_local_level_motion(
    model: *const rf_earth_model,
    position: *const rf_geodetic,
    velocity_ned: *const rf_vec3,
    acceleration_ned: *const rf_vec3,
    out_motion: *mut rf_frame_motion,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let p: Geodetic = unsafe { read(position) }?.into();
        let (v, a): (Vector3<f64>, Vector3<f64>) =
            (unsafe { read(velocity_ned) }?.into(), unsafe { read(acceleration_ned) }?.into());
        let o = unsafe { out(out_motion) }?;
        *o = (&earth::local_level_motion(&m, &p, &v, &a)?).into();
        Ok(())
    })
}

/// ECEF relative to the inertial frame at `time` (s) after an epoch where the rotation angle
/// was `angle_at_epoch` (rad).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_motion(
    model: *const rf_earth_model,
    time: f64,
    angle_at_epoch: f64,
    out_motion: *mut rf_frame_motion,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let o = unsafe { out(out_motion) }?;
        *o = (&earth::earth_motion(&m, time, angle_at_epoch)?).into();
        Ok(())
    })
}

/// Earth Rotation Angle (rad, in [0, 2π)) at the UT1 Julian date `jd_ut1 + jd_ut1_fraction`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_rotation_angle(jd_ut1: f64, jd_ut1_fraction: f64, out_angle: *mut f64) -> rf_status {
    boundary(|| {
        let o = unsafe { out(out_angle) }?;
        *o = earth::earth_rotation_angle(jd_ut1, jd_ut1_fraction)?;
        Ok(())
    })
}

type ScalarAtLatitude = fn(&EarthModel, f64, f64) -> rotaframe::Result<f64>;

unsafe fn scalar_at(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    out_value: *mut f64,
    f: ScalarAtLatitude,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let o = unsafe { out(out_value) }?;
        *o = f(&m, latitude, height)?;
        Ok(())
    })
}

/// Normal gravity (m/s²) at a geodetic latitude (rad) and ellipsoidal height (m).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_normal_gravity(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    out_gravity: *mut f64,
) -> rf_status {
    unsafe { scalar_at(model, latitude, height, out_gravity, earth::normal_gravity_at_height) }
}

/// The Schuler period (s), `2π √((√(M N) + h) / γ(φ, h))`, at a geodetic latitude (rad) and
/// ellipsoidal height (m).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_schuler_period(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    out_period: *mut f64,
) -> rf_status {
    unsafe { scalar_at(model, latitude, height, out_period, earth::schuler_period) }
}

/// Coriolis parameter `2 Ω sin φ` (1/s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_coriolis_parameter(
    model: *const rf_earth_model,
    latitude: f64,
    out_parameter: *mut f64,
) -> rf_status {
    unsafe { scalar_at(model, latitude, 0.0, out_parameter, |m, lat, _| earth::coriolis_parameter(m, lat)) }
}

/// Plumb-line gravity `(0, 0, γ(φ, h))` resolved in NED (m/s²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_gravity_ned(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    out_gravity: *mut rf_vec3,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let o = unsafe { out(out_gravity) }?;
        *o = earth::gravity_ned(&m, latitude, height)?.into();
        Ok(())
    })
}

type EcefFunction = fn(&EarthModel, &Vector3<f64>) -> rotaframe::Result<Vector3<f64>>;

unsafe fn at_ecef(model: *const rf_earth_model, ecef: *const rf_vec3, out_vector: *mut rf_vec3, f: EcefFunction) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let x: Vector3<f64> = unsafe { read(ecef) }?.into();
        let o = unsafe { out(out_vector) }?;
        *o = f(&m, &x)?.into();
        Ok(())
    })
}

/// J2 gravitation (no centrifugal part) at an ECEF position, resolved in ECEF (m/s²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_gravitation_ecef(
    model: *const rf_earth_model,
    ecef: *const rf_vec3,
    out_gravitation: *mut rf_vec3,
) -> rf_status {
    unsafe { at_ecef(model, ecef, out_gravitation, earth::gravitation_ecef) }
}

/// Gravity (J2 gravitation plus centrifugal) at an ECEF position, resolved in ECEF (m/s²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_gravity_ecef(
    model: *const rf_earth_model,
    ecef: *const rf_vec3,
    out_gravity: *mut rf_vec3,
) -> rf_status {
    unsafe { at_ecef(model, ecef, out_gravity, earth::gravity_ecef) }
}

/// Centripetal acceleration `ω × (ω × r)` of an Earth-fixed point at an ECEF position (m/s²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_centripetal_acceleration_ecef(
    model: *const rf_earth_model,
    ecef: *const rf_vec3,
    out_acceleration: *mut rf_vec3,
) -> rf_status {
    unsafe { at_ecef(model, ecef, out_acceleration, earth::centripetal_acceleration_ecef) }
}

/// Eötvös correction (m/s², to add to a moving gravimeter's reading).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_eotvos_correction(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    velocity_ned: *const rf_vec3,
    out_correction: *mut f64,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let v: Vector3<f64> = unsafe { read(velocity_ned) }?.into();
        let o = unsafe { out(out_correction) }?;
        *o = earth::eotvos_correction(&m, latitude, height, &v)?;
        Ok(())
    })
}

/// The CIP coordinates X, Y and the CIO locator s (rad) of the IAU 2006/2000A model.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct rf_cip_xys {
    /// X (rad).
    pub x: f64,
    /// Y (rad).
    pub y: f64,
    /// s (rad).
    pub s: f64,
}

/// Polar motion and the celestial pole offsets (rad) for `rf_celestial_to_terrestrial`; all
/// zero is the model without observed Earth orientation.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct rf_pole_coordinates {
    /// Pole coordinate x (rad).
    pub xp: f64,
    /// Pole coordinate y (rad).
    pub yp: f64,
    /// Celestial pole offset dX (rad), added to X.
    pub dx: f64,
    /// Celestial pole offset dY (rad), added to Y.
    pub dy: f64,
}

/// The CIP coordinates and CIO locator at the TT date `tt` (IERS Conventions 2010, tables 5.2a,
/// 5.2b, 5.2d). More than ten centuries from J2000.0 returns `RF_STATUS_OUT_OF_RANGE`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_cip_coordinates(
    tt: *const crate::time::rf_julian_date,
    out_coordinates: *mut rf_cip_xys,
) -> rf_status {
    boundary(|| {
        let tt = unsafe { read(tt) }?;
        let o = unsafe { out(out_coordinates) }?;
        let c = earth::celestial::cip_coordinates(tt.into())?;
        *o = rf_cip_xys { x: c.x, y: c.y, s: c.s };
        Ok(())
    })
}

/// The TIO locator s′ (rad) at the TT date `tt` (IERS Conventions 2010, eq. 5.13).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_tio_locator(tt: *const crate::time::rf_julian_date, out_s_prime: *mut f64) -> rf_status {
    boundary(|| {
        let tt = unsafe { read(tt) }?;
        let o = unsafe { out(out_s_prime) }?;
        *o = earth::celestial::tio_locator(tt.into())?;
        Ok(())
    })
}

/// The matrix that maps GCRS coordinates to ITRS coordinates at TT date `tt` and UT1 date `ut1`
/// with `pole` (NULL: zeros), written row-major to `out_matrix[9]` (IERS Conventions 2010, eq.
/// 5.1, CIO based).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_celestial_to_terrestrial(
    tt: *const crate::time::rf_julian_date,
    ut1: *const crate::time::rf_julian_date,
    pole: *const rf_pole_coordinates,
    out_matrix: *mut f64,
) -> rf_status {
    boundary(|| {
        let (tt, ut1) = (unsafe { read(tt) }?, unsafe { read(ut1) }?);
        // SAFETY: NULL or valid, as documented.
        let p = unsafe { pole.as_ref() }.copied().unwrap_or_default();
        let out_matrix = unsafe { slice_mut(out_matrix, 9) }?;
        let pole = earth::celestial::PoleCoordinates { xp: p.xp, yp: p.yp, dx: p.dx, dy: p.dy };
        put_row_major(out_matrix, &earth::celestial::celestial_to_terrestrial(tt.into(), ut1.into(), &pole)?);
        Ok(())
    })
}

/// ITRS relative to GCRS at the TT date `tt`, with UT1 − UTC, polar motion and dX, dY from
/// `eop` (interpolated with their rates): rotation, angular velocity and acceleration (per TT
/// second, resolved in GCRS). A date outside the table returns `RF_STATUS_OUT_OF_RANGE`. The
/// table is checked whole at every call, as by `rf_earth_orientation_at`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_earth_motion_iers(
    tt: *const crate::time::rf_julian_date,
    eop: *const crate::time::rf_earth_orientation,
    out_motion: *mut rf_frame_motion,
) -> rf_status {
    boundary(|| {
        let (tt, table) = (unsafe { read(tt) }?, unsafe { read(eop) }?);
        let o = unsafe { out(out_motion) }?;
        let motion = unsafe { crate::time::with_view(&table, |view| Ok(earth::celestial::itrs_motion(tt.into(), view)?)) }?;
        *o = (&motion).into();
        Ok(())
    })
}
