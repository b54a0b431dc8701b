//! Aided navigation for firmware: an error-state Kalman filter around the strapdown stepper,
//! in storage the caller owns (`rf_aided_nav`), with a predict per IMU increment and one update
//! function per measurement kind; stationary alignment.
//!
//! `rf_aided_nav` is opaque storage of `RF_AIDED_NAV_WORDS` 64-bit words (5,704 bytes): the
//! core's navigator of either size (15 or 21 states) held in place, behind a tag that
//! `rf_aided_init` writes. Every call checks the tag (`RF_STATUS_INVALID_ARGUMENT` for storage
//! that `rf_aided_init` did not fill) and works on a copy, so that on error the storage is
//! unchanged. Nothing is allocated, except by the smoother of ground tools ([`smoother`]), whose
//! navigator records its calls.

#[cfg(feature = "std")]
pub mod smoother;

#[cfg(feature = "std")]
use smoother::Recorder;

/// Without the standard library nothing records (no heap): a recorder cannot exist.
#[cfg(not(feature = "std"))]
#[derive(Debug)]
enum Recorder {}

#[cfg(not(feature = "std"))]
impl Recorder {
    fn predict(&mut self, _: &mut AidedNavigator, _: &ImuIncrement) -> Fallible<()> {
        match *self {}
    }

    fn update(&mut self, _: &mut AidedNavigator, _: &Measurement) -> Fallible<UpdateReport> {
        match *self {}
    }
}

use rotaframe::aided::{self, AidedNavigator, FilterSettings, Measurement, StationaryRecord, UpdateReport};
use rotaframe::nalgebra::Vector3;
use rotaframe::nav::ImuIncrement;

use crate::nav::{error_model_of, rf_imu_error_model, rf_imu_increment, rf_nav_state, rf_strapdown};
use crate::status::{
    Fallible, RF_STATUS_INVALID_ARGUMENT, boundary, distinct_outputs, out, read, region, rf_status, slice, slice_mut,
};
use crate::types::{rf_geodetic, rf_quat, rf_vec3};

/// 64-bit words of `rf_aided_nav`.
pub const RF_AIDED_NAV_WORDS: usize = 713;

/// Caller-owned storage for an aided navigator (opaque: only `rf_aided_init` fills it; copy
/// it freely; 5,704 bytes, aligned to 8). See `rf_aided_init`.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct rf_aided_nav {
    /// Opaque contents.
    pub storage: [u64; RF_AIDED_NAV_WORDS],
}

/// What one measurement update found.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_aided_report {
    /// Rows used (1 to 3).
    pub rows: u32,
    /// 1 if the measurement passed the gate and was applied, else 0.
    pub accepted: u32,
    /// Innovation `z − ẑ` (position in NED metres); zero beyond `rows`.
    pub innovation: rf_vec3,
    /// Square roots of the diagonal of the innovation covariance.
    pub std: rf_vec3,
    /// Normalised innovation squared.
    pub nis: f64,
}

/// The tag of filled storage ("rfaided1" in ASCII).
const TAG: u64 = 0x7266_6169_6465_6431;

#[repr(C)]
struct Stored {
    tag: u64,
    navigator: AidedNavigator,
    /// The recorder of a smoother's navigator (null otherwise), valid while `home` is this
    /// storage's own address (a copy elsewhere records nothing).
    recorder: *mut Recorder,
    home: usize,
}

const _: () = {
    assert!(core::mem::size_of::<Stored>() <= RF_AIDED_NAV_WORDS * 8);
    assert!(core::mem::align_of::<Stored>() <= 8);
};

/// The navigator in filled storage.
fn load(storage: &rf_aided_nav) -> Fallible<AidedNavigator> {
    if storage.storage[0] != TAG {
        return Err(RF_STATUS_INVALID_ARGUMENT);
    }
    // SAFETY: the tag is written only by `save`, together with a whole `Stored` at the start of
    // the storage, which is large and aligned enough (asserted above); the caller treats the
    // storage as opaque (documented), so the bytes after the tag are that navigator's.
    let stored = unsafe { &*(storage.storage.as_ptr().cast::<Stored>()) };
    Ok(stored.navigator)
}

/// Writes a navigator and the tag into the storage, not recording.
fn fill(storage: &mut rf_aided_nav, navigator: AidedNavigator) {
    let stored = Stored { tag: TAG, navigator, recorder: core::ptr::null_mut(), home: 0 };
    // SAFETY: as in `load`: the storage holds at least a `Stored`, aligned to 8.
    unsafe { storage.storage.as_mut_ptr().cast::<Stored>().write(stored) };
}

/// Writes a navigator into filled storage, leaving its recording as it is.
fn save(storage: &mut rf_aided_nav, navigator: AidedNavigator) {
    // SAFETY: as in `load`; the storage was filled (its tag checked by the `load` before), so
    // writing the one field keeps the rest.
    unsafe { (*storage.storage.as_mut_ptr().cast::<Stored>()).navigator = navigator };
}

/// The recorder of a smoother's navigator, if `storage` is one (at its own address).
fn recorder_of(storage: &mut rf_aided_nav) -> Option<&mut Recorder> {
    let home = core::ptr::from_mut(storage) as usize;
    // SAFETY: as in `load` (the callers loaded the storage first, so it is filled).
    let stored = unsafe { &*(storage.storage.as_ptr().cast::<Stored>()) };
    if stored.recorder.is_null() || stored.home != home {
        return None;
    }
    // SAFETY: `recorder` and `home` are set together only by `rf_smoother_new`, for the
    // navigator inside the smoother's allocation, whose recorder it points to; that navigator
    // is at `home`, so this storage is it, and the recorder lives as long as it does (both are
    // freed together by `rf_smoother_free`). Copies elsewhere have another address.
    Some(unsafe { &mut *stored.recorder })
}

/// Marks the storage (filled, at its final address) as recording into `recorder`.
#[cfg(feature = "std")]
fn attach(storage: &mut rf_aided_nav, recorder: *mut Recorder) {
    let home = core::ptr::from_mut(storage) as usize;
    // SAFETY: as in `save`.
    unsafe {
        let stored = storage.storage.as_mut_ptr().cast::<Stored>();
        (*stored).recorder = recorder;
        (*stored).home = home;
    }
}

/// Creates an aided navigator in `out_nav` starting from `strapdown`'s state: `errors`
/// (NULL: a perfect IMU) gives the process noise (white noise, Gauss–Markov terms) and the
/// initial sensor-error estimate (fixed bias, scale factor, misalignment, compensated from the
/// first increment); `p0` the initial covariance, `states × states` values (15 or 21 states;
/// symmetric, row- or column-major alike) in the error-state order of the README's
/// "Linearisation"; `gate` the probability of the innovation gate (0: no gate, else strictly
/// between 0 and 1); `propagate_every` the increments per covariance propagation (1: every
/// increment, second-order form).
///
/// Size and stack: `rf_aided_nav` is 5,704 bytes. A call copies the navigator once or twice;
/// its working arrays are at most eight 21 × 24 matrices (32 KiB, the 21-state covariance
/// step): budget 64 KiB of stack per call (15 states: about half). Estimated from the arrays,
/// not measured on a target: check with your toolchain's stack analysis.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_init(
    strapdown: *const rf_strapdown,
    errors: *const rf_imu_error_model,
    p0: *const f64,
    states: usize,
    gate: f64,
    propagate_every: usize,
    out_nav: *mut rf_aided_nav,
) -> rf_status {
    boundary(|| {
        let stepper = unsafe { read(strapdown) }?.to_core()?;
        let model = unsafe { error_model_of(errors) }?;
        if states != 15 && states != 21 {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        let p0 = unsafe { slice(p0, states * states) }?;
        let gate = if gate == 0.0 { None } else { Some(gate) };
        let navigator = AidedNavigator::new(stepper, &model, p0, states, FilterSettings { gate, propagate_every })?;
        fill(unsafe { out(out_nav) }?, navigator);
        Ok(())
    })
}

/// Advances `nav` by one IMU increment (compensated by the current sensor-error estimate).
/// On error `nav` is unchanged. A smoother's navigator (`rf_smoother_nav`) records the call;
/// `RF_STATUS_OUT_OF_MEMORY` if its recording cannot grow.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_predict(nav: *mut rf_aided_nav, increment: *const rf_imu_increment) -> rf_status {
    boundary(|| {
        let increment: ImuIncrement = unsafe { read(increment) }?.into();
        let storage = unsafe { out(nav) }?;
        let mut navigator = load(storage)?;
        match recorder_of(storage) {
            Some(recorder) => recorder.predict(&mut navigator, &increment)?,
            None => navigator.predict(&increment)?,
        }
        save(storage, navigator);
        Ok(())
    })
}

/// Applies one measurement (recorded by a smoother's navigator); writes its report to
/// `out_report` (NULL allowed).
unsafe fn update(nav: *mut rf_aided_nav, measurement: Measurement, out_report: *mut rf_aided_report) -> rf_status {
    boundary(|| {
        let storage = unsafe { out(nav) }?;
        let mut navigator = load(storage)?;
        let report: UpdateReport = match recorder_of(storage) {
            Some(recorder) => recorder.update(&mut navigator, &measurement)?,
            None => navigator.update(&measurement)?,
        };
        save(storage, navigator);
        if let Some(o) = unsafe { out_report.as_mut() } {
            *o = rf_aided_report {
                rows: report.rows as u32,
                accepted: u32::from(report.accepted),
                innovation: report.innovation.into(),
                std: report.std.into(),
                nis: report.nis,
            };
        }
        Ok(())
    })
}

/// Reads an optional vector (NULL: zero).
unsafe fn optional(v: *const rf_vec3) -> Fallible<Vector3<f64>> {
    if v.is_null() { Ok(Vector3::zeros()) } else { Ok(unsafe { read(v) }?.into()) }
}

/// A GNSS position fix: geodetic antenna `position` (rad, rad, m), `sigma_ned` 1σ north, east,
/// down (m), `lever_arm` the antenna in body axes (m; NULL: none). On error `nav` is unchanged.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_update_position(
    nav: *mut rf_aided_nav,
    position: *const rf_geodetic,
    sigma_ned: *const rf_vec3,
    lever_arm: *const rf_vec3,
    out_report: *mut rf_aided_report,
) -> rf_status {
    let read_all = || -> Fallible<Measurement> {
        Ok(Measurement::Position {
            position: unsafe { read(position) }?.into(),
            sigma_ned: unsafe { read(sigma_ned) }?.into(),
            lever_arm: unsafe { optional(lever_arm) }?,
        })
    };
    match read_all() {
        Ok(m) => unsafe { update(nav, m, out_report) },
        Err(status) => status,
    }
}

/// A GNSS velocity fix (NED, m/s) at `lever_arm` (NULL: none).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_update_velocity(
    nav: *mut rf_aided_nav,
    velocity_ned: *const rf_vec3,
    sigma_ned: *const rf_vec3,
    lever_arm: *const rf_vec3,
    out_report: *mut rf_aided_report,
) -> rf_status {
    let read_all = || -> Fallible<Measurement> {
        Ok(Measurement::Velocity {
            velocity_ned: unsafe { read(velocity_ned) }?.into(),
            sigma_ned: unsafe { read(sigma_ned) }?.into(),
            lever_arm: unsafe { optional(lever_arm) }?,
        })
    };
    match read_all() {
        Ok(m) => unsafe { update(nav, m, out_report) },
        Err(status) => status,
    }
}

/// A zero-velocity update (σ per NED axis, m/s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_update_zero_velocity(
    nav: *mut rf_aided_nav,
    sigma_ned: *const rf_vec3,
    out_report: *mut rf_aided_report,
) -> rf_status {
    match unsafe { read(sigma_ned) } {
        Ok(s) => unsafe { update(nav, Measurement::ZeroVelocity { sigma_ned: s.into() }, out_report) },
        Err(status) => status,
    }
}

/// A zero-angular-rate update (σ per body axis, rad/s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_update_zero_angular_rate(
    nav: *mut rf_aided_nav,
    sigma: *const rf_vec3,
    out_report: *mut rf_aided_report,
) -> rf_status {
    match unsafe { read(sigma) } {
        Ok(s) => unsafe { update(nav, Measurement::ZeroAngularRate { sigma: s.into() }, out_report) },
        Err(status) => status,
    }
}

/// The land-vehicle constraint at `lever_arm` (NULL: none) in vehicle axes given by the
/// body-to-vehicle `mounting` (NULL: identity), with 1σ lateral and vertical (m/s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_update_vehicle_constraint(
    nav: *mut rf_aided_nav,
    mounting: *const rf_quat,
    lever_arm: *const rf_vec3,
    sigma_lateral: f64,
    sigma_vertical: f64,
    out_report: *mut rf_aided_report,
) -> rf_status {
    let read_all = || -> Fallible<Measurement> {
        Ok(Measurement::VehicleConstraint {
            mounting: unsafe { mounting_of(mounting) }?,
            lever_arm: unsafe { optional(lever_arm) }?,
            sigma: [sigma_lateral, sigma_vertical],
        })
    };
    match read_all() {
        Ok(m) => unsafe { update(nav, m, out_report) },
        Err(status) => status,
    }
}

/// An odometer's forward `speed` (m/s) at `lever_arm` in vehicle axes (`mounting` as for the
/// constraint), 1σ `sigma` (m/s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_update_odometer(
    nav: *mut rf_aided_nav,
    speed: f64,
    mounting: *const rf_quat,
    lever_arm: *const rf_vec3,
    sigma: f64,
    out_report: *mut rf_aided_report,
) -> rf_status {
    let read_all = || -> Fallible<Measurement> {
        Ok(Measurement::Odometer {
            speed,
            mounting: unsafe { mounting_of(mounting) }?,
            lever_arm: unsafe { optional(lever_arm) }?,
            sigma,
        })
    };
    match read_all() {
        Ok(m) => unsafe { update(nav, m, out_report) },
        Err(status) => status,
    }
}

/// An ellipsoidal `height` (m) with 1σ `sigma` (m).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_update_height(
    nav: *mut rf_aided_nav,
    height: f64,
    sigma: f64,
    out_report: *mut rf_aided_report,
) -> rf_status {
    unsafe { update(nav, Measurement::Height { height, sigma }, out_report) }
}

/// A true `heading` (rad, clockwise from north; a magnetic heading plus the declination) with
/// 1σ `sigma` (rad).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_update_heading(
    nav: *mut rf_aided_nav,
    heading: f64,
    sigma: f64,
    out_report: *mut rf_aided_report,
) -> rf_status {
    unsafe { update(nav, Measurement::Heading { heading, sigma }, out_report) }
}

/// A mounting quaternion (NULL: identity).
unsafe fn mounting_of(q: *const rf_quat) -> Fallible<rotaframe::nalgebra::UnitQuaternion<f64>> {
    if q.is_null() { Ok(rotaframe::nalgebra::UnitQuaternion::identity()) } else { unsafe { read(q) }?.to_core("mounting") }
}

/// Writes the navigation state (geodetic position, NED velocity, body-to-NED attitude).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_state(nav: *const rf_aided_nav, out_state: *mut rf_nav_state) -> rf_status {
    boundary(|| {
        let navigator = load(unsafe { nav.as_ref() }.ok_or(crate::status::RF_STATUS_NULL_POINTER)?)?;
        *unsafe { out(out_state) }? = (&navigator.state()).into();
        Ok(())
    })
}

/// Writes the stepper with every correction fed back into `inout_strapdown`, whose
/// configuration must be that of the stepper given to `rf_aided_init` (its state and step
/// memory are overwritten; `RF_STATUS_INVALID_ARGUMENT` for another configuration).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_strapdown(nav: *const rf_aided_nav, inout_strapdown: *mut rf_strapdown) -> rf_status {
    boundary(|| {
        let navigator = load(unsafe { nav.as_ref() }.ok_or(crate::status::RF_STATUS_NULL_POINTER)?)?;
        let o = unsafe { out(inout_strapdown) }?;
        let mut result = *o;
        if result.config_core()? != *navigator.strapdown().config() {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        result.store(navigator.strapdown());
        *o = result;
        Ok(())
    })
}

/// Writes the covariance (`count` must be states², symmetric) to `out_covariance`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_covariance(nav: *const rf_aided_nav, out_covariance: *mut f64, count: usize) -> rf_status {
    boundary(|| {
        let navigator = load(unsafe { nav.as_ref() }.ok_or(crate::status::RF_STATUS_NULL_POINTER)?)?;
        let n = navigator.states();
        if count != n * n {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        navigator.write_covariance(unsafe { slice_mut(out_covariance, count) }?)?;
        Ok(())
    })
}

/// Writes the estimated sensor errors (`count` must be states − 9: accelerometer bias, gyro
/// bias, then for 21 states the accelerometer and gyro scale factors; measured = true + bias).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_aided_sensor_errors(nav: *const rf_aided_nav, out_errors: *mut f64, count: usize) -> rf_status {
    boundary(|| {
        let navigator = load(unsafe { nav.as_ref() }.ok_or(crate::status::RF_STATUS_NULL_POINTER)?)?;
        if count + 9 != navigator.states() {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        navigator.write_sensor_errors(unsafe { slice_mut(out_errors, count) }?)?;
        Ok(())
    })
}

/// Stationary coarse alignment from `count` increments at rest at `latitude`, `height` (rad,
/// m): levelling and gyrocompassing. `errors` (NULL allowed) gives the 1σ; `heading` (NULL
/// allowed) points to an external `(heading, σ)` pair (rad) used instead of gyrocompassing.
/// Writes the body-to-NED attitude and the roll, pitch, heading 1σ (rad).
/// `RF_STATUS_UNOBSERVABLE` when the gyros cannot see the Earth's rotation and no heading is
/// given.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_align_stationary(
    increments: *const rf_imu_increment,
    count: usize,
    latitude: f64,
    height: f64,
    errors: *const rf_imu_error_model,
    heading: *const f64,
    out_attitude: *mut rf_quat,
    out_sigma: *mut rf_vec3,
) -> rf_status {
    boundary(|| {
        let increments = unsafe { slice(increments, count) }?;
        let model = if errors.is_null() { None } else { Some(unsafe { error_model_of(errors) }?) };
        let heading = if heading.is_null() {
            None
        } else {
            let h = unsafe { slice(heading, 2) }?;
            Some((h[0], h[1]))
        };
        let record = StationaryRecord::from_increments(increments.iter().map(|&i| ImuIncrement::from(i)))?;
        let a = aided::align_stationary(&rotaframe::earth::WGS84, &record, latitude, height, model.as_ref(), heading)?;
        distinct_outputs(&[region(out_attitude, 1), region(out_sigma, 1)])?;
        let (attitude, sigma) = (unsafe { out(out_attitude) }?, unsafe { out(out_sigma) }?);
        *attitude = (&a.attitude).into();
        *sigma = a.sigma.into();
        Ok(())
    })
}
