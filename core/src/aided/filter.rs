//! The closed-loop error-state Kalman filter around a [`Strapdown`] (formulas: the
//! [module documentation](super)).

use nalgebra::{Matrix3, SMatrix, SVector, Vector3};

use super::gate::{MAX_ROWS, chi_square_quantile};
use super::measurement::Measurement;
use crate::error::{Error, Result};
use crate::linearise::aiding::NavPoint;
use crate::linearise::inertial::{
    NOISE_INPUTS, check_initial_covariance, discretise, error_model, noise_psd, propagate_covariance_second_order_in_place,
    symmetrise,
};
use crate::nav::{ImuErrorModel, ImuIncrement, NavState, Strapdown};

/// How the filter propagates its covariance and gates its measurements.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FilterSettings {
    /// The probability of the innovation gate: a measurement whose NIS exceeds the
    /// chi-square quantile of this probability (for its number of rows) is rejected. `None`
    /// accepts every measurement.
    pub gate: Option<f64>,
    /// Increments per covariance propagation: 1 propagates at every increment with the
    /// second-order discrete form; `k > 1` sums `k` increments and propagates once with the
    /// exact discrete form over their interval, the model taken at the start (for slow
    /// vehicles; a measurement always propagates what is pending first).
    pub propagate_every: usize,
}

impl Default for FilterSettings {
    fn default() -> Self {
        Self { gate: Some(0.999), propagate_every: 1 }
    }
}

/// The sensor errors a filter compensates, in the [`ImuErrorModel`] convention
/// (`measured = (I + diag(s) + M) true + b`): its initial fixed terms plus what the filter has
/// estimated since.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct SensorEstimate {
    /// Accelerometer bias (m/s², body axes): the fixed part and the Gauss–Markov part summed.
    pub accelerometer_bias: Vector3<f64>,
    /// Gyro bias (rad/s).
    pub gyro_bias: Vector3<f64>,
    /// Accelerometer scale-factor errors (dimensionless).
    pub accelerometer_scale_factor: Vector3<f64>,
    /// Gyro scale-factor errors.
    pub gyro_scale_factor: Vector3<f64>,
}

/// What one measurement update found.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct UpdateReport {
    /// Rows used (1 to 3).
    pub rows: usize,
    /// The innovation `z − ẑ` (measured minus predicted; position in NED metres), zero
    /// beyond `rows`.
    pub innovation: Vector3<f64>,
    /// The square roots of the diagonal of the innovation covariance `S = H P Hᵀ + R`.
    pub std: Vector3<f64>,
    /// The normalised innovation squared `yᵀ S⁻¹ y`.
    pub nis: f64,
    /// Whether the measurement passed the gate and was applied.
    pub accepted: bool,
}

/// The linear algebra of one accepted update, for a smoother's backward pass: the
/// measurement Jacobian, the inverse innovation covariance, the innovation of the measurement
/// on the error state and the gain. Rows beyond the measurement's are zero (and `S⁻¹` there is
/// the identity block of the padding).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Gain<const N: usize> {
    /// Rows used (1 to 3).
    pub rows: usize,
    /// `H = ∂ẑ/∂δx`.
    pub jacobian: SMatrix<f64, MAX_ROWS, N>,
    /// `S⁻¹ = (H P Hᵀ + R)⁻¹`.
    pub s_inverse: Matrix3<f64>,
    /// `ν = ẑ − z = −y`: the innovation of the error-state measurement `ν ≈ H δx + v`, whose
    /// update is `δx̂ = K ν`.
    pub innovation: Vector3<f64>,
    /// `K = P Hᵀ S⁻¹`.
    pub gain: SMatrix<f64, N, MAX_ROWS>,
    /// The diagonal of the measurement noise covariance `R` (zero beyond `rows`).
    pub noise_variance: Vector3<f64>,
}

/// What a filter carries besides its stepper, covariance, model and settings: the sensor-error
/// estimate in its parts and the compensated rates of the last increment (for saving a filter:
/// a pickle, a C struct).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct FilterMemory {
    /// Fixed parts of the bias estimates, accelerometer then gyro.
    pub fixed_bias: [Vector3<f64>; 2],
    /// Gauss–Markov parts of the bias estimates, accelerometer then gyro.
    pub markov_bias: [Vector3<f64>; 2],
    /// Scale-factor estimates, accelerometer then gyro.
    pub scale_factor: [Vector3<f64>; 2],
    /// Compensated angular rate of the last increment (rad/s).
    pub rate: Vector3<f64>,
    /// Compensated specific force of the last increment (m/s²).
    pub force: Vector3<f64>,
}

/// Increments summed since the last covariance propagation.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Pending {
    start: Strapdown,
    delta_angle: Vector3<f64>,
    delta_velocity: Vector3<f64>,
    interval: f64,
    count: usize,
}

/// A closed-loop error-state Kalman filter of `N` states (15 or 21) around a [`Strapdown`];
/// heap-free and `Copy`. See the [module documentation](super).
///
/// ```
/// use nalgebra::{SMatrix, Vector3};
/// use rotaframe::aided::{AidedFilter, FilterSettings, Measurement};
/// use rotaframe::earth::{earth_rate_ned, gravity_ned, Geodetic, WGS84};
/// use rotaframe::nav::{ImuErrorModel, ImuIncrement, NavState, Strapdown, StrapdownConfig};
/// let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), Default::default())).unwrap();
/// let p0 = SMatrix::<f64, 15, 15>::from_diagonal(&nalgebra::SVector::<f64, 15>::from_fn(|i, _| if i < 2 { 1e-12 } else { 1e-4 }));
/// let mut filter = AidedFilter::<15>::new(ins, &ImuErrorModel::default(), &p0, FilterSettings::default()).unwrap();
/// let dt = 0.01;
/// let still = ImuIncrement::new(earth_rate_ned(&WGS84, here.latitude).unwrap() * dt, -gravity_ned(&WGS84, here.latitude, here.height).unwrap() * dt, dt);
/// for _ in 0..100 {
///     filter.predict(&still).unwrap();
/// }
/// let report = filter.update(&Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(0.01) }).unwrap();
/// assert!(report.accepted);
/// assert!(filter.covariance()[(3, 3)] < 1e-4); // the velocity variance shrank
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AidedFilter<const N: usize> {
    strapdown: Strapdown,
    covariance: SMatrix<f64, N, N>,
    /// Fixed (random-constant) parts of the bias estimates, accelerometer then gyro.
    fixed_bias: [Vector3<f64>; 2],
    /// Gauss–Markov parts of the bias estimates, decaying with their correlation times.
    markov_bias: [Vector3<f64>; 2],
    scale_factor: [Vector3<f64>; 2],
    /// `(I + diag(s) + M)⁻¹` of each triad, accelerometer then gyro.
    inverse_gain: [Matrix3<f64>; 2],
    model: ImuErrorModel,
    psd: SVector<f64, NOISE_INPUTS>,
    settings: FilterSettings,
    thresholds: [f64; MAX_ROWS],
    pending: Pending,
    /// The compensated angular rate and specific force of the last increment (body axes).
    rate: Vector3<f64>,
    force: Vector3<f64>,
    /// The interval the decay factors were computed for, and the factors.
    decay_interval: f64,
    decay: [Vector3<f64>; 2],
}

impl<const N: usize> AidedFilter<N> {
    /// A filter starting from `strapdown`'s state with covariance `p0` (the
    /// [`inertial`](crate::linearise::inertial) state order and units). `imu` gives the
    /// process noise (white noise and Gauss–Markov terms) and, through its fixed terms (bias,
    /// scale factor, misalignment), the initial estimate of the sensor errors, compensated from
    /// the first increment on.
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `states` unless `N` is 15 or 21; as
    /// [`check_initial_covariance`] for `p0`; as [`ImuErrorModel::validate`]; [`Error::Invalid`]
    /// naming `imu` if a triad's gain `I + diag(s) + M` is singular; [`Error::OutOfRange`]
    /// naming `gate` (strictly between 0 and 1) or `propagate_every` (at least 1).
    pub fn new(strapdown: Strapdown, imu: &ImuErrorModel, p0: &SMatrix<f64, N, N>, settings: FilterSettings) -> Result<Self> {
        if N != 15 && N != 21 {
            return Err(Error::Invalid { quantity: "states", reason: "the filter has 15 or 21 states" });
        }
        check_initial_covariance(p0)?;
        imu.validate()?;
        if settings.propagate_every == 0 {
            return Err(Error::OutOfRange { quantity: "propagate_every", value: 0.0, min: 1.0, max: f64::MAX });
        }
        let mut thresholds = [f64::INFINITY; MAX_ROWS];
        if let Some(p) = settings.gate {
            for (rows, t) in thresholds.iter_mut().enumerate() {
                *t = chi_square_quantile(p, rows + 1)?;
            }
        }
        let mut filter = Self {
            strapdown,
            covariance: *p0,
            fixed_bias: [imu.accelerometer.bias, imu.gyro.bias],
            markov_bias: [Vector3::zeros(); 2],
            scale_factor: [imu.accelerometer.scale_factor, imu.gyro.scale_factor],
            inverse_gain: [Matrix3::identity(); 2],
            model: *imu,
            psd: noise_psd(imu),
            settings,
            thresholds,
            pending: Pending {
                start: strapdown,
                delta_angle: Vector3::zeros(),
                delta_velocity: Vector3::zeros(),
                interval: 0.0,
                count: 0,
            },
            rate: Vector3::zeros(),
            force: Vector3::zeros(),
            decay_interval: 0.0,
            decay: [Vector3::repeat(1.0); 2],
        };
        filter.update_gains()?;
        Ok(filter)
    }

    /// A filter resumed from saved parts ([`memory`](Self::memory), [`covariance`](Self::covariance)).
    ///
    /// # Errors
    /// As [`new`](Self::new) (the covariance named `p0`); [`Error::NonFinite`] naming `memory`.
    pub fn from_parts(
        strapdown: Strapdown,
        imu: &ImuErrorModel,
        covariance: &SMatrix<f64, N, N>,
        settings: FilterSettings,
        memory: &FilterMemory,
    ) -> Result<Self> {
        let mut filter = Self::new(strapdown, imu, covariance, settings)?;
        let parts = [memory.fixed_bias, memory.markov_bias, memory.scale_factor];
        for v in parts.iter().flatten().chain([&memory.rate, &memory.force]) {
            crate::error::ensure_finite(v.as_slice(), "memory")?;
        }
        filter.fixed_bias = memory.fixed_bias;
        filter.markov_bias = memory.markov_bias;
        filter.scale_factor = memory.scale_factor;
        filter.rate = memory.rate;
        filter.force = memory.force;
        filter.update_gains()?;
        Ok(filter)
    }

    /// The filter's memory (see [`FilterMemory`]).
    #[must_use]
    pub fn memory(&self) -> FilterMemory {
        FilterMemory {
            fixed_bias: self.fixed_bias,
            markov_bias: self.markov_bias,
            scale_factor: self.scale_factor,
            rate: self.rate,
            force: self.force,
        }
    }

    /// Recomputes `(I + diag(s) + M)⁻¹` of both triads.
    fn update_gains(&mut self) -> Result<()> {
        self.inverse_gain = gains(&self.scale_factor, &self.model)?;
        Ok(())
    }

    /// The increment with the current sensor-error estimate removed:
    /// `Δθ_c = (I + diag(s_g) + M_g)⁻¹ (Δθ − b_g T)`, and the same for `Δv`.
    #[must_use]
    pub fn compensate(&self, increment: &ImuIncrement) -> ImuIncrement {
        compensate(&self.inverse_gain, &self.sensor_estimate(), increment)
    }

    /// Advances the navigation state by one increment (compensated first) and the covariance
    /// with it (or sums it for a later propagation; [`FilterSettings::propagate_every`]). On
    /// error the filter is unchanged.
    ///
    /// # Errors
    /// As [`ImuIncrement::validate`], [`Strapdown::step`], [`error_model`] and the discrete
    /// forms.
    #[inline]
    pub fn predict(&mut self, increment: &ImuIncrement) -> Result<()> {
        increment.validate()?;
        let compensated = self.compensate(increment);
        compensated.validate()?;
        let t = increment.interval;
        let (rate, force) = (compensated.delta_angle / t, compensated.delta_velocity / t);
        let mut stepper = self.strapdown;
        stepper.step(&compensated)?;
        if self.settings.propagate_every == 1 {
            let (config, state, _) = self.strapdown.parts();
            let times = (&self.model.accelerometer.markov_time, &self.model.gyro.markov_time);
            let (f, g) = error_model::<N>(&config, &state, &force, &rate, times)?;
            // F and G come from checked inputs (the increment, the stepper, the model).
            propagate_covariance_second_order_in_place(&f, &g, &self.psd, &mut self.covariance, t)?;
        } else {
            let mut next = *self;
            let pending = &mut next.pending;
            if pending.count == 0 {
                *pending = Pending {
                    start: self.strapdown,
                    delta_angle: Vector3::zeros(),
                    delta_velocity: Vector3::zeros(),
                    interval: 0.0,
                    count: 0,
                };
            }
            pending.delta_angle += compensated.delta_angle;
            pending.delta_velocity += compensated.delta_velocity;
            pending.interval += t;
            pending.count += 1;
            if pending.count >= self.settings.propagate_every {
                next.flush()?;
            }
            *self = next;
        }
        self.strapdown = stepper;
        self.rate = rate;
        self.force = force;
        self.decay_markov(t);
        Ok(())
    }

    /// Propagates the covariance over the increments summed since the last propagation (none
    /// with `propagate_every = 1`). On error the filter is unchanged.
    ///
    /// # Errors
    /// As [`error_model`] and [`discretise`].
    pub fn flush(&mut self) -> Result<()> {
        let pending = self.pending;
        if pending.count == 0 {
            return Ok(());
        }
        let t = pending.interval;
        let (config, state, _) = pending.start.parts();
        let times = (&self.model.accelerometer.markov_time, &self.model.gyro.markov_time);
        let (f, g) = error_model::<N>(&config, &state, &(pending.delta_velocity / t), &(pending.delta_angle / t), times)?;
        let (phi, q) = discretise(&f, &g, &self.psd, t)?;
        let mut p = phi * self.covariance * phi.transpose() + q;
        symmetrise(&mut p);
        crate::error::ensure_finite(p.as_slice(), "p")?;
        self.covariance = p;
        self.pending.count = 0;
        Ok(())
    }

    /// Decays the Gauss–Markov parts of the bias estimates over `t`, as their truth decays
    /// on average (`e^{−t/τ}`).
    fn decay_markov(&mut self, t: f64) {
        if t != self.decay_interval {
            let times = [self.model.accelerometer.markov_time, self.model.gyro.markov_time];
            for (decay, time) in self.decay.iter_mut().zip(&times) {
                *decay = time.map(|tau| if tau.is_finite() { crate::math::exp(-t / tau) } else { 1.0 });
            }
            self.decay_interval = t;
        }
        for (bias, decay) in self.markov_bias.iter_mut().zip(&self.decay) {
            bias.component_mul_assign(decay);
        }
    }

    /// Applies one measurement at the current time: its innovation is gated and, if
    /// accepted, the Joseph-form update is made and its estimate fed back (navigation
    /// corrections into the stepper, sensor errors into the compensation) and the error state
    /// reset. A rejected measurement changes nothing but the propagation of pending increments.
    /// On error the filter is unchanged.
    ///
    /// # Errors
    /// As [`Measurement::validate`] and [`Measurement::linearise`]; as
    /// [`Strapdown::remove_error`] for the corrected state; [`Error::Invalid`] naming `p` if the
    /// innovation covariance is not positive definite.
    #[inline]
    pub fn update(&mut self, measurement: &Measurement) -> Result<UpdateReport> {
        self.update_checked::<false>(measurement, &mut None)
    }

    /// [`update`](Self::update), also returning the [`Gain`] of an accepted update (for a
    /// smoother).
    ///
    /// # Errors
    /// As [`update`](Self::update).
    #[inline]
    pub fn update_with_gain(&mut self, measurement: &Measurement) -> Result<(UpdateReport, Option<Gain<N>>)> {
        let mut gain = None;
        let report = self.update_checked::<true>(measurement, &mut gain)?;
        Ok((report, gain))
    }

    /// [`update`](Self::update), writing the [`Gain`] of an accepted update to `gain` only when
    /// `GAIN` (the filter alone does not pay for it).
    #[inline(always)]
    fn update_checked<const GAIN: bool>(
        &mut self,
        measurement: &Measurement,
        gain: &mut Option<Gain<N>>,
    ) -> Result<UpdateReport> {
        let earth = self.strapdown.config().earth;
        measurement.validate(&earth)?;
        if self.pending.count > 0 {
            let mut next = *self;
            next.flush()?;
            let report = next.update_propagated::<GAIN>(measurement, &earth, gain)?;
            *self = next;
            return Ok(report);
        }
        self.update_propagated::<GAIN>(measurement, &earth, gain)
    }

    /// [`update`](Self::update) with nothing pending; changes the filter only at the end, so
    /// that on error it is unchanged.
    #[inline(always)]
    fn update_propagated<const GAIN: bool>(
        &mut self,
        measurement: &Measurement,
        earth: &crate::earth::EarthModel,
        gain: &mut Option<Gain<N>>,
    ) -> Result<UpdateReport> {
        let point = NavPoint::of(&self.strapdown, &self.rate);
        let linear = measurement.linearise::<N>(&point, earth)?;
        let rows = linear.rows;
        let sigma = measurement.sigma();
        let h = linear.jacobian;
        let u = h * self.covariance;
        let mut s = u * h.transpose();
        for i in 0..MAX_ROWS {
            s[(i, i)] += if i < rows { sigma[i] * sigma[i] } else { 1.0 };
        }
        let s_inverse = nalgebra::Cholesky::new(s)
            .map(|c| c.inverse())
            .filter(|m| m.iter().all(|x| x.is_finite()))
            .ok_or(Error::Invalid { quantity: "p", reason: "the innovation covariance H P Hᵀ + R is not positive definite" })?;
        let y = linear.residual;
        let nis = y.dot(&(s_inverse * y));
        let mut std = Vector3::zeros();
        for i in 0..rows {
            std[i] = crate::math::sqrt(s[(i, i)]);
        }
        let accepted = nis <= self.thresholds[rows - 1];
        let report = UpdateReport { rows, innovation: y, std, nis, accepted };
        if accepted {
            let k = u.transpose() * s_inverse;
            let estimate: SVector<f64, N> = -(k * y);
            let mut covariance = self.covariance;
            joseph_update(&mut covariance, &k, &u, &s);
            crate::error::ensure_finite(covariance.as_slice(), "p")?;
            let corrected = self.fed_back(&estimate)?;
            self.covariance = covariance;
            self.strapdown = corrected.strapdown;
            self.fixed_bias = corrected.fixed_bias;
            self.markov_bias = corrected.markov_bias;
            self.scale_factor = corrected.scale_factor;
            self.inverse_gain = corrected.inverse_gain;
            if GAIN {
                let noise_variance = Vector3::from_fn(|i, _| if i < rows { sigma[i] * sigma[i] } else { 0.0 });
                *gain = Some(Gain { rows, jacobian: h, s_inverse, innovation: -y, gain: k, noise_variance });
            }
        }
        Ok(report)
    }

    /// The stepper and sensor-error estimate with an error-state estimate fed back: the
    /// navigation errors removed from the stepper, the residual sensor errors added to the
    /// compensation.
    fn fed_back(&self, estimate: &SVector<f64, N>) -> Result<Corrected> {
        let v = |i: usize| Vector3::new(estimate[i], estimate[i + 1], estimate[i + 2]);
        let mut strapdown = self.strapdown;
        strapdown.remove_error(&v(0), &v(3), &v(6))?;
        let (mut fixed_bias, mut markov_bias, mut scale_factor) = (self.fixed_bias, self.markov_bias, self.scale_factor);
        let times = [self.model.accelerometer.markov_time, self.model.gyro.markov_time];
        for (triad, time) in times.iter().enumerate() {
            let delta = v(9 + 3 * triad);
            for axis in 0..3 {
                if time[axis].is_finite() {
                    markov_bias[triad][axis] += delta[axis];
                } else {
                    fixed_bias[triad][axis] += delta[axis];
                }
            }
            if N == 21 {
                scale_factor[triad] += v(15 + 3 * triad);
            }
        }
        let limit = crate::nav::MAX_SENSOR_ERROR;
        crate::limits::check_vector(&(fixed_bias[0] + markov_bias[0]), limit, "m/s²", "p")?;
        crate::limits::check_vector(&(fixed_bias[1] + markov_bias[1]), limit, "rad/s", "p")?;
        let mut corrected = Corrected { strapdown, fixed_bias, markov_bias, scale_factor, inverse_gain: self.inverse_gain };
        // Only the 21-state model estimates scale factors, which change the gains.
        if N == 21 {
            corrected.inverse_gain = gains(&scale_factor, &self.model)?;
        }
        Ok(corrected)
    }

    /// The navigation state.
    #[must_use]
    pub fn state(&self) -> NavState {
        self.strapdown.state()
    }

    /// The stepper (with the corrections fed back).
    #[must_use]
    pub fn strapdown(&self) -> &Strapdown {
        &self.strapdown
    }

    /// The error covariance, as of the last propagation (see [`flush`](Self::flush)).
    #[must_use]
    pub fn covariance(&self) -> &SMatrix<f64, N, N> {
        &self.covariance
    }

    /// The settings.
    #[must_use]
    pub fn settings(&self) -> &FilterSettings {
        &self.settings
    }

    /// The IMU error model of the process noise.
    #[must_use]
    pub fn imu(&self) -> &ImuErrorModel {
        &self.model
    }

    /// The compensated angular rate and specific force of the last increment (rad/s, m/s²,
    /// body axes; zero before the first).
    #[must_use]
    pub fn last_rates(&self) -> (Vector3<f64>, Vector3<f64>) {
        (self.rate, self.force)
    }

    /// The sensor errors compensated now.
    #[must_use]
    pub fn sensor_estimate(&self) -> SensorEstimate {
        SensorEstimate {
            accelerometer_bias: self.fixed_bias[0] + self.markov_bias[0],
            gyro_bias: self.fixed_bias[1] + self.markov_bias[1],
            accelerometer_scale_factor: self.scale_factor[0],
            gyro_scale_factor: self.scale_factor[1],
        }
    }

    /// The sensor-error estimate in state order (`N − 9` values: accelerometer bias, gyro
    /// bias, then for 21 states the accelerometer and gyro scale factors) into `out`.
    ///
    /// # Panics
    /// If `out` is shorter than `N − 9` (a caller's sizing error).
    pub fn write_sensor_errors(&self, out: &mut [f64]) {
        let e = self.sensor_estimate();
        let parts = [e.accelerometer_bias, e.gyro_bias, e.accelerometer_scale_factor, e.gyro_scale_factor];
        for (chunk, part) in out[..N - 9].chunks_exact_mut(3).zip(parts) {
            chunk.copy_from_slice(part.as_slice());
        }
    }
}

/// A stepper and sensor-error estimate after a feedback, before they are committed.
struct Corrected {
    strapdown: Strapdown,
    fixed_bias: [Vector3<f64>; 2],
    markov_bias: [Vector3<f64>; 2],
    scale_factor: [Vector3<f64>; 2],
    inverse_gain: [Matrix3<f64>; 2],
}

/// The increment with a sensor-error estimate removed:
/// `Δθ_c = (I + diag(ŝ_g) + M_g)⁻¹ (Δθ − b̂_g T)`, and the same for `Δv`; `inverse_gain` from
/// [`gains`], accelerometer then gyro.
#[inline]
pub(crate) fn compensate(inverse_gain: &[Matrix3<f64>; 2], estimate: &SensorEstimate, increment: &ImuIncrement) -> ImuIncrement {
    let t = increment.interval;
    ImuIncrement {
        delta_angle: inverse_gain[1] * (increment.delta_angle - estimate.gyro_bias * t),
        delta_velocity: inverse_gain[0] * (increment.delta_velocity - estimate.accelerometer_bias * t),
        interval: t,
    }
}

/// `(I + diag(s) + M)⁻¹` of both triads (accelerometer, gyro) for the scale factors `scale`.
pub(crate) fn gains(scale: &[Vector3<f64>; 2], model: &ImuErrorModel) -> Result<[Matrix3<f64>; 2]> {
    let misalignment = [model.accelerometer.misalignment, model.gyro.misalignment];
    let mut out = [Matrix3::identity(); 2];
    for ((inverse, s), m) in out.iter_mut().zip(scale).zip(&misalignment) {
        let gain = Matrix3::identity() + Matrix3::from_diagonal(s) + m;
        *inverse = gain
            .try_inverse()
            .filter(|m| m.iter().all(|x| x.is_finite()))
            .ok_or(Error::Invalid { quantity: "imu", reason: "a triad's gain I + diag(s) + M is singular" })?;
    }
    Ok(out)
}

/// `P ← P − K U − Uᵀ Kᵀ + K S Kᵀ` with `U = H P`: the Joseph form
/// `(I − K H) P (I − K H)ᵀ + K R Kᵀ` multiplied out (`S = H P Hᵀ + R`; the same for any gain),
/// formed by rank-3 terms in `O(N²)` and made exactly symmetric.
pub(crate) fn joseph_update<const N: usize>(
    p: &mut SMatrix<f64, N, N>,
    k: &SMatrix<f64, N, MAX_ROWS>,
    u: &SMatrix<f64, MAX_ROWS, N>,
    s: &Matrix3<f64>,
) {
    // P + K W − Uᵀ Kᵀ with W = S Kᵀ − U: column j gains Σ_a (K[:, a] W[a, j] − U[a, :]ᵀ K[j, a]).
    let w = s * k.transpose() - u;
    let kt = k.transpose();
    for j in 0..N {
        let mut column = [0.0f64; N];
        column.copy_from_slice(p.column(j).as_slice());
        for a in 0..MAX_ROWS {
            let (w_aj, k_ja) = (w[(a, j)], kt[(a, j)]);
            let (k_col, u_row) = (k.column(a), u.row(a));
            for (i, c) in column.iter_mut().enumerate() {
                *c += k_col[i] * w_aj - u_row[i] * k_ja;
            }
        }
        p.column_mut(j).copy_from_slice(&column);
    }
    symmetrise(p);
}
