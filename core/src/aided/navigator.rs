//! An aided navigator of either size (15 or 21 states, chosen at run time), with its clock,
//! and the run over an IMU log and measurement sets: the time line of both, the splitting of
//! an increment at a measurement's time, and what is handed out after each step.

use nalgebra::{SMatrix, Vector3};

use super::filter::{AidedFilter, FilterMemory, FilterSettings, Gain, UpdateReport};
use super::measurement::Measurement;
use crate::error::{BatchError, Error, Result, ensure_finite};
use crate::nav::{ImuErrorModel, ImuIncrement, MechanizationState, NavState, Strapdown};

/// A measurement within this time (s) of an IMU time is applied at that IMU time; one further
/// from both ends of an increment splits it (see [`AidedNavigator::run`]).
pub const TIME_SNAP: f64 = 1e-6;

/// The most measurement sets one run takes.
pub const MAX_MEASUREMENT_SETS: usize = 32;

/// A filter of either size. (Held inline: the navigator allocates nothing, so a 15-state
/// navigator carries the 21-state variant's size.)
#[derive(Debug, Clone, Copy, PartialEq)]
#[allow(clippy::large_enum_variant)]
enum Sized {
    Fifteen(AidedFilter<15>),
    TwentyOne(AidedFilter<21>),
}

/// Calls the same code on the filter of either size.
macro_rules! each {
    ($sized:expr, $f:ident => $body:expr) => {
        match $sized {
            Sized::Fifteen($f) => $body,
            Sized::TwentyOne($f) => $body,
        }
    };
}

/// A sequence of measurements at strictly increasing times (s, on the IMU's time scale).
pub trait MeasurementSet {
    /// How many measurements the set holds.
    fn len(&self) -> usize;
    /// Whether the set is empty.
    fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// The time of measurement `index`.
    fn time(&self, index: usize) -> f64;
    /// Measurement `index`.
    fn measurement(&self, index: usize) -> Measurement;
}

/// A measurement set held in two slices (times and measurements).
#[derive(Debug, Clone, Copy)]
pub struct MeasurementSlices<'a> {
    /// Times (s).
    pub times: &'a [f64],
    /// Measurements, one per time.
    pub measurements: &'a [Measurement],
}

impl MeasurementSet for MeasurementSlices<'_> {
    fn len(&self) -> usize {
        self.times.len().min(self.measurements.len())
    }
    fn time(&self, index: usize) -> f64 {
        self.times[index]
    }
    fn measurement(&self, index: usize) -> Measurement {
        self.measurements[index]
    }
}

/// An accepted update's [`Gain`], of either size: `H` (`3 × states`) and `K` (`states × 3`)
/// column-major, the other parts as in [`Gain`].
#[derive(Debug, Clone, Copy)]
pub struct GainTrace<'a> {
    /// Rows used (1 to 3).
    pub rows: usize,
    /// `H`, column-major `3 × states`.
    pub jacobian: &'a [f64],
    /// `S⁻¹`.
    pub s_inverse: &'a nalgebra::Matrix3<f64>,
    /// `ν = ẑ − z`.
    pub innovation: &'a Vector3<f64>,
    /// `K`, column-major `states × 3`.
    pub gain: &'a [f64],
    /// The diagonal of `R`.
    pub noise_variance: &'a Vector3<f64>,
}

impl<'a, const N: usize> From<&'a Gain<N>> for GainTrace<'a> {
    fn from(g: &'a Gain<N>) -> Self {
        Self {
            rows: g.rows,
            jacobian: g.jacobian.as_slice(),
            s_inverse: &g.s_inverse,
            innovation: &g.innovation,
            gain: g.gain.as_slice(),
            noise_variance: &g.noise_variance,
        }
    }
}

/// What a run hands out as it goes. Every method has an empty default.
pub trait RunSink {
    /// Whether the run calls [`propagated`](Self::propagated) and [`updated`](Self::updated)
    /// (what a smoother records; off by default, and then free).
    const TRACES: bool = false;
    /// After each covariance propagation (every increment, or part of one split at a
    /// measurement): the mechanization state it started from, and the navigator after it
    /// (its [`last_rates`](AidedNavigator::last_rates) are the compensated rates it used).
    /// Called only when [`TRACES`](Self::TRACES).
    fn propagated(&mut self, start: &MechanizationState, interval: f64, navigator: &AidedNavigator) {
        let _ = (start, interval, navigator);
    }
    /// After each accepted update, with its gain and the covariance after it (`states²`
    /// values). Called only when [`TRACES`](Self::TRACES).
    fn updated(&mut self, gain: &GainTrace<'_>, covariance: &[f64]) {
        let _ = (gain, covariance);
    }
    /// After IMU time `index` (0 for the start, `k + 1` after increment `k`) and every
    /// measurement at that time.
    fn step(&mut self, index: usize, navigator: &AidedNavigator) {
        let _ = (index, navigator);
    }
    /// After measurement `index` of set `set` was processed (accepted or not).
    fn measurement(&mut self, set: usize, index: usize, report: &UpdateReport) {
        let _ = (set, index, report);
    }
    /// After all the measurements at one time, with whether any was accepted.
    fn epoch(&mut self, time: f64, navigator: &AidedNavigator, accepted: bool) {
        let _ = (time, navigator, accepted);
    }
    /// Asked after every IMU time: `true` stops the run, which then fails with
    /// [`Error::Invalid`] naming `progress` and leaves the navigator unchanged.
    fn stop(&mut self) -> bool {
        false
    }
}

/// A sink that keeps nothing.
impl RunSink for () {}

/// An error-state filter of 15 or 21 states with its clock; see the
/// [module documentation](super).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::aided::{AidedNavigator, FilterSettings, Measurement, MeasurementSlices};
/// use rotaframe::earth::{earth_rate_ned, gravity_ned, Geodetic, WGS84};
/// use rotaframe::nav::{ImuErrorModel, NavState, Strapdown, StrapdownConfig};
/// let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), Default::default())).unwrap();
/// let mut p0 = [0.0; 225];
/// for i in 0..15 { p0[i * 16] = if i < 2 { 1e-12 } else { 1e-4 }; }
/// let mut nav = AidedNavigator::new(ins, &ImuErrorModel::default(), &p0, 15, FilterSettings::default()).unwrap();
/// // Two seconds at rest, 100 Hz, with a zero-velocity update each second.
/// let times: Vec<f64> = (0..=200).map(|k| k as f64 * 0.01).collect();
/// let w = earth_rate_ned(&WGS84, here.latitude).unwrap() * 0.01;
/// let f = -gravity_ned(&WGS84, here.latitude, here.height).unwrap() * 0.01;
/// let (dtheta, dv) = (vec![[w.x, w.y, w.z]; 200], vec![[f.x, f.y, f.z]; 200]);
/// let still = [Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(0.01) }; 2];
/// let zupts = MeasurementSlices { times: &[1.0, 2.0], measurements: &still };
/// nav.run(&times, &dtheta, &dv, &[&zupts], &mut ()).unwrap();
/// assert_eq!(nav.time(), Some(2.0));
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AidedNavigator {
    filter: Sized,
    time: Option<f64>,
}

impl AidedNavigator {
    /// A navigator of `states` (15 or 21) states; `p0` holds `states²` values (symmetric, so
    /// row- or column-major alike). See [`AidedFilter::new`].
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `states`; [`Error::LengthMismatch`] naming `p0`; as
    /// [`AidedFilter::new`].
    pub fn new(strapdown: Strapdown, imu: &ImuErrorModel, p0: &[f64], states: usize, settings: FilterSettings) -> Result<Self> {
        let size = states * states;
        if states != 15 && states != 21 {
            return Err(Error::Invalid { quantity: "states", reason: "must be 15 or 21" });
        }
        if p0.len() != size {
            return Err(Error::LengthMismatch { quantity: "p0", found: p0.len(), expected: size });
        }
        let filter = if states == 15 {
            Sized::Fifteen(AidedFilter::new(strapdown, imu, &SMatrix::from_column_slice(p0), settings)?)
        } else {
            Sized::TwentyOne(AidedFilter::new(strapdown, imu, &SMatrix::from_column_slice(p0), settings)?)
        };
        Ok(Self { filter, time: None })
    }

    /// A navigator resumed from saved parts: see [`parts`](Self::parts).
    ///
    /// # Errors
    /// As [`new`](Self::new) and [`AidedFilter::from_parts`]; [`Error::NonFinite`] naming
    /// `time`.
    pub fn from_parts(
        strapdown: Strapdown,
        imu: &ImuErrorModel,
        covariance: &[f64],
        states: usize,
        settings: FilterSettings,
        memory: &FilterMemory,
        time: Option<f64>,
    ) -> Result<Self> {
        let mut nav = Self::new(strapdown, imu, covariance, states, settings)?;
        nav.filter = match nav.filter {
            Sized::Fifteen(_) => Sized::Fifteen(AidedFilter::from_parts(
                strapdown,
                imu,
                &SMatrix::from_column_slice(covariance),
                settings,
                memory,
            )?),
            Sized::TwentyOne(_) => Sized::TwentyOne(AidedFilter::from_parts(
                strapdown,
                imu,
                &SMatrix::from_column_slice(covariance),
                settings,
                memory,
            )?),
        };
        if let Some(t) = time {
            nav.set_time(t)?;
        }
        Ok(nav)
    }

    /// The parts that [`from_parts`](Self::from_parts) takes back: the stepper, the memory and
    /// the clock, with the covariance written to `covariance` (`states²` values). Increments
    /// summed for a later propagation ([`FilterSettings::propagate_every`] above 1) are
    /// propagated first, in the parts only.
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] naming `out`; as [`flush`](Self::flush).
    pub fn parts(&self, covariance: &mut [f64]) -> Result<(Strapdown, FilterMemory, Option<f64>)> {
        let mut settled = *self;
        settled.flush()?;
        settled.write_covariance(covariance)?;
        let memory = each!(&settled.filter, f => f.memory());
        Ok((*settled.strapdown(), memory, settled.time))
    }

    /// The number of states.
    #[must_use]
    pub fn states(&self) -> usize {
        match self.filter {
            Sized::Fifteen(_) => 15,
            Sized::TwentyOne(_) => 21,
        }
    }

    /// The time of the state (s, on the run's time scale), `None` before the first run.
    #[must_use]
    pub fn time(&self) -> Option<f64> {
        self.time
    }

    /// Sets the clock (for callers that step by hand: [`predict`](Self::predict) does not
    /// advance it).
    ///
    /// # Errors
    /// [`Error::NonFinite`] naming `time`.
    pub fn set_time(&mut self, time: f64) -> Result<()> {
        crate::error::ensure_finite1(time, "time")?;
        self.time = Some(time);
        Ok(())
    }

    /// See [`AidedFilter::predict`].
    ///
    /// # Errors
    /// As [`AidedFilter::predict`].
    #[inline]
    pub fn predict(&mut self, increment: &ImuIncrement) -> Result<()> {
        each!(&mut self.filter, f => f.predict(increment))
    }

    /// [`predict`](Self::predict), telling a tracing sink the piece (see [`RunSink::TRACES`]).
    #[inline]
    fn predict_traced<S: RunSink>(&mut self, increment: &ImuIncrement, sink: &mut S) -> Result<()> {
        if S::TRACES {
            let start = self.strapdown().parts().1;
            self.predict(increment)?;
            sink.propagated(&start, increment.interval, self);
            Ok(())
        } else {
            self.predict(increment)
        }
    }

    /// [`update`](Self::update) with a measurement of set `set` (its `index`-th), telling the
    /// sink: [`RunSink::updated`] for an accepted update when the sink traces, then
    /// [`RunSink::measurement`]. On error the sink is told nothing.
    ///
    /// # Errors
    /// As [`update`](Self::update).
    #[inline]
    pub fn update_traced<S: RunSink>(
        &mut self,
        measurement: &Measurement,
        set: usize,
        index: usize,
        sink: &mut S,
    ) -> Result<UpdateReport> {
        let report = if S::TRACES {
            each!(&mut self.filter, f => {
                let (report, gain) = f.update_with_gain(measurement)?;
                if let Some(g) = &gain {
                    sink.updated(&GainTrace::from(g), f.covariance().as_slice());
                }
                report
            })
        } else {
            self.update(measurement)?
        };
        sink.measurement(set, index, &report);
        Ok(report)
    }

    /// See [`AidedFilter::update`].
    ///
    /// # Errors
    /// As [`AidedFilter::update`].
    #[inline]
    pub fn update(&mut self, measurement: &Measurement) -> Result<UpdateReport> {
        each!(&mut self.filter, f => f.update(measurement))
    }

    /// See [`AidedFilter::flush`].
    ///
    /// # Errors
    /// As [`AidedFilter::flush`].
    pub fn flush(&mut self) -> Result<()> {
        each!(&mut self.filter, f => f.flush())
    }

    /// The navigation state.
    #[must_use]
    pub fn state(&self) -> NavState {
        each!(&self.filter, f => f.state())
    }

    /// The stepper.
    #[must_use]
    pub fn strapdown(&self) -> &Strapdown {
        each!(&self.filter, f => f.strapdown())
    }

    /// The settings.
    #[must_use]
    pub fn settings(&self) -> &FilterSettings {
        each!(&self.filter, f => f.settings())
    }

    /// The IMU error model.
    #[must_use]
    pub fn imu(&self) -> &ImuErrorModel {
        each!(&self.filter, f => f.imu())
    }

    /// The sensor-error estimate.
    #[must_use]
    pub fn sensor_estimate(&self) -> super::SensorEstimate {
        each!(&self.filter, f => f.sensor_estimate())
    }

    /// Writes the covariance (`states²` values, symmetric) into `out`.
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] naming `out`.
    pub fn write_covariance(&self, out: &mut [f64]) -> Result<()> {
        let n = self.states();
        if out.len() != n * n {
            return Err(Error::LengthMismatch { quantity: "out", found: out.len(), expected: n * n });
        }
        each!(&self.filter, f => out.copy_from_slice(f.covariance().as_slice()));
        Ok(())
    }

    /// Writes the 1σ of every state (the square roots of the covariance's diagonal) into
    /// `out` (`states` values).
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] naming `out`.
    pub fn write_sigma(&self, out: &mut [f64]) -> Result<()> {
        let n = self.states();
        if out.len() != n {
            return Err(Error::LengthMismatch { quantity: "out", found: out.len(), expected: n });
        }
        each!(&self.filter, f => {
            for (o, &v) in out.iter_mut().zip(f.covariance().diagonal().iter()) {
                *o = crate::math::sqrt(v.max(0.0));
            }
        });
        Ok(())
    }

    /// Writes the sensor-error estimate in state order (`states − 9` values) into `out`.
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] naming `out`.
    pub fn write_sensor_errors(&self, out: &mut [f64]) -> Result<()> {
        let n = self.states() - 9;
        if out.len() != n {
            return Err(Error::LengthMismatch { quantity: "out", found: out.len(), expected: n });
        }
        each!(&self.filter, f => f.write_sensor_errors(out));
        Ok(())
    }

    /// The compensated rates of the last increment; see [`AidedFilter::last_rates`].
    #[must_use]
    pub fn last_rates(&self) -> (Vector3<f64>, Vector3<f64>) {
        each!(&self.filter, f => f.last_rates())
    }

    /// Runs the filter over an IMU log and measurement sets.
    ///
    /// `times` holds the `n + 1` boundary times of the `n` increments (`delta_angles[k]`,
    /// `delta_velocities[k]` over `times[k] .. times[k + 1]`); measurement times are on the
    /// same scale. A run continues from where the previous one ended: `times[0]` must be the
    /// navigator's [`time`](Self::time) (when it has one).
    ///
    /// **Timing.** Measurements at one time are applied in the order of the sets, then of
    /// their index. A measurement within [`TIME_SNAP`] of an IMU time is applied there. One
    /// that falls inside an increment **splits the increment** at its time: the part before
    /// it, `α = (t_m − t_a)/(t_b − t_a)` of the angle and velocity increments (the rates taken as
    /// constant across the interval), is stepped, the measurement applied, and the rest
    /// stepped; the two-sample coning and sculling terms take the unequal parts as they come.
    ///
    /// `sink` receives the state after each IMU time and each measurement's report. On
    /// error the navigator is unchanged (what the sink received stays with it).
    ///
    /// # Errors
    /// [`BatchError`] with index 0 and [`Error::LengthMismatch`] naming `delta_angles` or
    /// `delta_velocities`, [`Error::Invalid`] naming `t` (fewer than two times, not strictly
    /// increasing, not starting at the navigator's time), [`Error::NonFinite`] naming `t` or
    /// `measurements`, [`Error::Invalid`] naming `measurements` (more than
    /// [`MAX_MEASUREMENT_SETS`] sets, or a set's times not strictly increasing),
    /// [`Error::OutOfRange`] naming `measurements` (a time outside the IMU span); with the
    /// index of the failing increment, as [`AidedFilter::predict`] and
    /// [`AidedFilter::update`].
    pub fn run(
        &mut self,
        times: &[f64],
        delta_angles: &[[f64; 3]],
        delta_velocities: &[[f64; 3]],
        sets: &[&dyn MeasurementSet],
        sink: &mut impl RunSink,
    ) -> core::result::Result<(), BatchError> {
        let at = |index| move |error| BatchError { index, error };
        self.check_run(times, delta_angles, delta_velocities, sets).map_err(at(0))?;
        let mut nav = *self;
        let mut cursors = [0usize; MAX_MEASUREMENT_SETS];
        nav.time = Some(times[0]);
        nav.apply_due(times[0], sets, &mut cursors, sink).map_err(at(0))?;
        sink.step(0, &nav);
        for (k, window) in times.windows(2).enumerate() {
            let (start, end) = (window[0], window[1]);
            let mut angle = Vector3::from(delta_angles[k]);
            let mut velocity = Vector3::from(delta_velocities[k]);
            let mut cursor = start;
            while let Some(next) = earliest(sets, &cursors)
                && next < end - TIME_SNAP
            {
                let share = (next - cursor) / (end - cursor);
                let piece = ImuIncrement::new(angle * share, velocity * share, next - cursor);
                nav.predict_traced(&piece, sink).map_err(at(k))?;
                angle -= piece.delta_angle;
                velocity -= piece.delta_velocity;
                cursor = next;
                nav.time = Some(next);
                nav.apply_due(next, sets, &mut cursors, sink).map_err(at(k))?;
            }
            nav.predict_traced(&ImuIncrement::new(angle, velocity, end - cursor), sink).map_err(at(k))?;
            nav.time = Some(end);
            nav.apply_due(end, sets, &mut cursors, sink).map_err(at(k))?;
            sink.step(k + 1, &nav);
            if sink.stop() {
                return Err(at(k)(Error::Invalid { quantity: "progress", reason: "the run was stopped by the caller" }));
            }
        }
        *self = nav;
        Ok(())
    }

    /// Applies every measurement due by `now` (within [`TIME_SNAP`]), set by set, and tells
    /// the sink.
    fn apply_due<S: RunSink>(
        &mut self,
        now: f64,
        sets: &[&dyn MeasurementSet],
        cursors: &mut [usize; MAX_MEASUREMENT_SETS],
        sink: &mut S,
    ) -> Result<()> {
        let (mut any, mut accepted) = (false, false);
        for (s, set) in sets.iter().enumerate() {
            while cursors[s] < set.len() && set.time(cursors[s]) <= now + TIME_SNAP {
                let report = self.update_traced(&set.measurement(cursors[s]), s, cursors[s], sink)?;
                accepted |= report.accepted;
                any = true;
                cursors[s] += 1;
            }
        }
        if any {
            sink.epoch(now, self, accepted);
        }
        Ok(())
    }

    /// The checks of [`run`](Self::run) on its inputs.
    fn check_run(
        &self,
        times: &[f64],
        delta_angles: &[[f64; 3]],
        delta_velocities: &[[f64; 3]],
        sets: &[&dyn MeasurementSet],
    ) -> Result<()> {
        if times.len() < 2 {
            return Err(Error::Invalid { quantity: "t", reason: "needs at least two times (one increment)" });
        }
        let n = times.len() - 1;
        for (quantity, found) in [("delta_angles", delta_angles.len()), ("delta_velocities", delta_velocities.len())] {
            if found != n {
                return Err(Error::LengthMismatch { quantity, found, expected: n });
            }
        }
        ensure_finite(times, "t")?;
        if times.windows(2).any(|w| w[1] <= w[0]) {
            return Err(Error::Invalid { quantity: "t", reason: "must be strictly increasing" });
        }
        if let Some(now) = self.time
            && (times[0] - now).abs() > TIME_SNAP
        {
            return Err(Error::Invalid { quantity: "t", reason: "must start at the time where the previous run ended" });
        }
        if sets.len() > MAX_MEASUREMENT_SETS {
            return Err(Error::Invalid { quantity: "measurements", reason: "at most 32 measurement sets per run" });
        }
        let (first, last) = (times[0], times[n]);
        for set in sets {
            check_measurement_times((0..set.len()).map(|i| set.time(i)), "measurements")?;
            let outside = (0..set.len()).map(|i| set.time(i)).find(|&t| t < first - TIME_SNAP || t > last + TIME_SNAP);
            if let Some(t) = outside {
                return Err(Error::OutOfRange { quantity: "measurements", value: t, min: first, max: last });
            }
        }
        Ok(())
    }
}

/// Checks a measurement set's times: finite and strictly increasing (no duplicates).
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::Invalid`] naming `quantity`.
///
/// ```
/// use rotaframe::aided::check_measurement_times;
/// assert!(check_measurement_times([0.0, 1.0, 2.0].into_iter(), "t").is_ok());
/// assert!(check_measurement_times([0.0, 1.0, 1.0].into_iter(), "t").is_err());
/// ```
pub fn check_measurement_times(times: impl Iterator<Item = f64>, quantity: &'static str) -> Result<()> {
    let mut previous = f64::NEG_INFINITY;
    for t in times {
        crate::error::ensure_finite1(t, quantity)?;
        if t <= previous {
            return Err(Error::Invalid { quantity, reason: "a set's times must be strictly increasing (no duplicates)" });
        }
        previous = t;
    }
    Ok(())
}

/// The earliest time not yet applied across the sets.
fn earliest(sets: &[&dyn MeasurementSet], cursors: &[usize; MAX_MEASUREMENT_SETS]) -> Option<f64> {
    sets.iter()
        .zip(cursors.iter().copied())
        .filter(|(set, c)| *c < set.len())
        .map(|(set, c)| set.time(c))
        .fold(None, |best: Option<f64>, t| Some(best.map_or(t, |b| b.min(t))))
}
