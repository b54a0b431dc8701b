//! The fixed-interval smoother for ground tools: a navigator that records its calls
//! (`rf_smoother_nav`, driven with the ordinary `rf_aided_predict` and `rf_aided_update_*`)
//! and the core's backward pass over the recording (`rf_smoother_smooth`; the core's
//! `aided::smoother`).
//!
//! `rf_smoother` is caller-owned: `rf_smoother_new` allocates it (on the heap, in the build
//! with the standard library), `rf_smoother_free` releases it. Firmware keeps the filter alone
//! (`rf_aided_nav`, no heap).

use rotaframe::aided::smoother::{SmoothedPoint, SmoothedSink, SmootherRecorder};
use rotaframe::aided::{AidedNavigator, Measurement, UpdateReport};
use rotaframe::nav::ImuIncrement;

use super::{TAG, attach, fill, load, rf_aided_nav};
use crate::nav::rf_nav_state;
use crate::status::{
    Fallible, RF_STATUS_INVALID_ARGUMENT, RF_STATUS_NULL_POINTER, RF_STATUS_OUT_OF_MEMORY, boundary, distinct_outputs, out,
    region, rf_status, slice_mut,
};

/// What a smoother's navigator records into: the core's recorder, growing its room before
/// each call so that a failed allocation is a status, not an abort.
#[derive(Debug)]
pub(super) struct Recorder(SmootherRecorder);

impl Recorder {
    /// Records a prediction (see the core's `SmootherRecorder::predict`).
    pub(super) fn predict(&mut self, navigator: &mut AidedNavigator, increment: &ImuIncrement) -> Fallible<()> {
        self.0.try_reserve(1, 0).map_err(|_| RF_STATUS_OUT_OF_MEMORY)?;
        Ok(self.0.predict(navigator, increment)?)
    }

    /// Records an update, each measurement kind its own set.
    pub(super) fn update(&mut self, navigator: &mut AidedNavigator, measurement: &Measurement) -> Fallible<UpdateReport> {
        self.0.try_reserve(0, 1).map_err(|_| RF_STATUS_OUT_OF_MEMORY)?;
        let set = match measurement {
            Measurement::Position { .. } => 0,
            Measurement::Velocity { .. } => 1,
            Measurement::ZeroVelocity { .. } => 2,
            Measurement::ZeroAngularRate { .. } => 3,
            Measurement::VehicleConstraint { .. } => 4,
            Measurement::Odometer { .. } => 5,
            Measurement::Height { .. } => 6,
            Measurement::Heading { .. } => 7,
        };
        Ok(self.0.update(navigator, measurement, set)?)
    }
}

/// A smoother (opaque; made by `rf_smoother_new`, released by `rf_smoother_free`): a navigator
/// that records its calls and the recording.
#[derive(Debug)]
pub struct rf_smoother {
    nav: rf_aided_nav,
    recorder: Recorder,
}

/// Makes a smoother in `*out_smoother` whose navigator (`rf_smoother_nav`) starts as a copy of
/// `nav` (which is left as it is) and records every `rf_aided_predict` and `rf_aided_update_*`
/// made on it: the first IMU time is `nav`'s present one, each predict closes a time, and the
/// updates between two predicts belong to the time before them. Room is reserved for
/// `increments` predicts and `measurements` updates (more grows the recording; a call that
/// cannot grow it returns `RF_STATUS_OUT_OF_MEMORY` and changes nothing).
///
/// The navigator must propagate its covariance at every increment (`propagate_every` 1:
/// else `RF_STATUS_INVALID_ARGUMENT`). Memory: about 150 bytes per increment, the three
/// matrices of each accepted update and a covariance every 256 increments and after each
/// accepted update. Available in the build with the standard library (ground tools).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_smoother_new(
    nav: *const rf_aided_nav,
    increments: usize,
    measurements: usize,
    out_smoother: *mut *mut rf_smoother,
) -> rf_status {
    boundary(|| {
        let navigator = load(unsafe { nav.as_ref() }.ok_or(RF_STATUS_NULL_POINTER)?)?;
        let slot = unsafe { out(out_smoother) }?;
        let mut recorder = SmootherRecorder::new(&navigator)?;
        recorder.try_reserve(increments, measurements).map_err(|_| RF_STATUS_OUT_OF_MEMORY)?;
        let mut storage = rf_aided_nav { storage: [0; super::RF_AIDED_NAV_WORDS] };
        fill(&mut storage, navigator);
        let smoother = Box::into_raw(Box::new(rf_smoother { nav: storage, recorder: Recorder(recorder) }));
        // SAFETY: `smoother` comes from `Box::into_raw` just above: valid, unique, and its
        // fields are at their final addresses (the box is not moved again).
        unsafe {
            let recorder = core::ptr::addr_of_mut!((*smoother).recorder);
            attach(&mut (*smoother).nav, recorder);
        }
        *slot = smoother;
        Ok(())
    })
}

/// Releases a smoother made by `rf_smoother_new` (NULL: nothing). Its navigator goes with it.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_smoother_free(smoother: *mut rf_smoother) {
    if !smoother.is_null() {
        // SAFETY: a non-NULL smoother comes from `rf_smoother_new` (documented), which made it
        // with `Box::into_raw`; it is released once.
        drop(unsafe { Box::from_raw(smoother) });
    }
}

/// The smoother's navigator: drive it with `rf_aided_predict` and the `rf_aided_update_*`
/// functions, and read it with the other `rf_aided_*` functions, as any navigator. Only this
/// storage records: a copy of it (to another address) is an ordinary navigator, and a
/// navigator copied over it stops the recording. NULL for a NULL smoother.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_smoother_nav(smoother: *mut rf_smoother) -> *mut rf_aided_nav {
    if smoother.is_null() {
        return core::ptr::null_mut();
    }
    // SAFETY: a non-NULL smoother comes from `rf_smoother_new` (documented).
    unsafe { core::ptr::addr_of_mut!((*smoother).nav) }
}

/// The number of IMU times recorded (the present one included) into `out_count`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_smoother_len(smoother: *const rf_smoother, out_count: *mut usize) -> rf_status {
    boundary(|| {
        let smoother = unsafe { smoother.as_ref() }.ok_or(RF_STATUS_NULL_POINTER)?;
        *unsafe { out(out_count) }? = smoother.recorder.0.len();
        Ok(())
    })
}

/// The smoothed solution at every IMU time recorded, in order: `out_states` (`count` states),
/// `out_sigma` (`count × states` 1σ of the error states, row by row) and `out_sensor_errors`
/// (`count × (states − 9)`: accelerometer bias, gyro bias, and for 21 states the scale
/// factors, in the `rf_aided_sensor_errors` convention). `count` must be `rf_smoother_len`'s
/// (`RF_STATUS_INVALID_ARGUMENT` otherwise, as for a navigator changed by a copy written over
/// it). The present IMU time is closed: a later predict goes on recording, a later update
/// at this time is refused. On error nothing is written.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_smoother_smooth(
    smoother: *mut rf_smoother,
    count: usize,
    out_states: *mut rf_nav_state,
    out_sigma: *mut f64,
    out_sensor_errors: *mut f64,
) -> rf_status {
    boundary(|| {
        let smoother = unsafe { smoother.as_mut() }.ok_or(RF_STATUS_NULL_POINTER)?;
        let n = smoother.recorder.0.states();
        if count != smoother.recorder.0.len() {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        let (sigmas, errors) = (count.saturating_mul(n), count.saturating_mul(n - 9));
        distinct_outputs(&[region(out_states, count), region(out_sigma, sigmas), region(out_sensor_errors, errors)])?;
        if smoother.nav.storage[0] != TAG {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        let navigator = load(&smoother.nav)?;
        let log = smoother.recorder.0.log(&navigator)?;
        let mut buffers =
            Buffers { states: n, points: try_zeroed(count)?, sigma: try_zeroed(sigmas)?, sensor_errors: try_zeroed(errors)? };
        log.smooth(&mut buffers)?;
        let states = unsafe { slice_mut(out_states, count) }?;
        let sigma = unsafe { slice_mut(out_sigma, sigmas) }?;
        let sensor_errors = unsafe { slice_mut(out_sensor_errors, errors) }?;
        for (o, point) in states.iter_mut().zip(&buffers.points) {
            *o = point.into();
        }
        sigma.copy_from_slice(&buffers.sigma);
        sensor_errors.copy_from_slice(&buffers.sensor_errors);
        Ok(())
    })
}

/// A vector of `n` default values, or `RF_STATUS_OUT_OF_MEMORY`.
fn try_zeroed<T: Default + Clone>(n: usize) -> Fallible<Vec<T>> {
    let mut v = Vec::new();
    v.try_reserve_exact(n).map_err(|_| RF_STATUS_OUT_OF_MEMORY)?;
    v.resize(n, T::default());
    Ok(v)
}

/// The smoothed solution gathered before it is written out.
struct Buffers {
    states: usize,
    points: Vec<rotaframe::nav::NavState>,
    sigma: Vec<f64>,
    sensor_errors: Vec<f64>,
}

impl SmoothedSink for Buffers {
    fn point(&mut self, index: usize, point: &SmoothedPoint<'_>) {
        let (n, m) = (self.states, self.states - 9);
        if let Some(slot) = self.points.get_mut(index) {
            *slot = point.state;
        }
        if let Some(row) = self.sigma.get_mut(index * n..(index + 1) * n) {
            row.copy_from_slice(point.sigma);
        }
        if let Some(row) = self.sensor_errors.get_mut(index * m..(index + 1) * m) {
            row.copy_from_slice(point.sensor_errors);
        }
    }
}
