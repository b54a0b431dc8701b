//! A seeded, reproducible sensor error model to corrupt ideal IMU increments for simulation.
//!
//! For each triad (gyros, accelerometers), with the true rate or specific force `x`:
//!
//! ```text
//! x̃ = (I + diag(s) + M) x + b + b_GM(t) + n(t)
//! ```
//!
//! * `b`: fixed per-axis bias (rad/s, m/s²);
//! * `s`: per-axis scale-factor error (dimensionless; 1e-6 is 1 ppm);
//! * `M`: misalignment and cross-coupling, a 3×3 matrix with zero diagonal (small angles, rad);
//! * `n`: white noise of spectral density `N` (rad/s/√Hz = rad/√s for gyros, the angle random
//!   walk; m/s/√s for accelerometers, the velocity random walk);
//! * `b_GM`: a first-order Gauss–Markov bias with steady-state standard deviation σ and
//!   correlation time τ, propagated exactly over each interval `T` as
//!   `b ← e^{−T/τ} b + σ √(1 − e^{−2T/τ}) w` with `w` standard normal (A. Gelb, ed., *Applied
//!   Optimal Estimation*, MIT Press 1974, ch. 3); it starts from a draw of its steady state.
//!
//! Applied to increments over an interval `T`: `Δθ̃ = (I + diag(s) + M) Δθ + (b + b_GM) T + N √T w`
//! (the white noise integrated over the interval has standard deviation `N √T`; IEEE Std
//! 952-1997, annex C, for the random-walk units).
//!
//! The trade quotes white noise as angle random walk in deg/√h and velocity random walk in
//! m/s/√h; [`angle_random_walk_from_deg_per_sqrt_hour`] and
//! [`velocity_random_walk_from_mps_per_sqrt_hour`] convert (`1 deg/√h = (π/180)/60 rad/√s`,
//! `1 m/s/√h = 1/60 m/s/√s`, since `√3600 s = 60 √s`).
//!
//! Random numbers come from the xoshiro256++ generator (`rand_xoshiro`) seeded through
//! SplitMix64, and standard normal draws from `rand_distr`'s ziggurat sampler: a seed gives
//! the same sequence on every run and platform with the same build. A stream's position is
//! saved as its four state words `s₀…s₃` ([`stream_words`]) and resumed from them
//! ([`stream_from_words`]); the all-zero state, which xoshiro never reaches from a seed and
//! cannot leave, is refused.

use nalgebra::{Matrix3, Vector3};
use rand_distr::{Distribution, StandardNormal};
/// The random generator behind [`ImuErrorGenerator`] (xoshiro256++, from `rand_xoshiro`),
/// re-exported for code that saves and restores a generator's parts.
pub use rand_xoshiro::Xoshiro256PlusPlus;
use rand_xoshiro::rand_core::SeedableRng;

use super::imu::ImuIncrement;
use crate::error::{Error, Result, ensure_finite, ensure_finite3};
use crate::limits::check_vector;
use crate::math;

/// The state words of a random stream, for saving its position (a C struct, a pickle):
/// [`stream_from_words`] of them continues the stream exactly where it is.
///
/// ```
/// use rotaframe::nav::{stream_from_words, stream_words, Xoshiro256PlusPlus};
/// use rand_xoshiro::rand_core::{Rng, SeedableRng};
/// let mut a = Xoshiro256PlusPlus::seed_from_u64(7);
/// a.next_u64();
/// let mut b = stream_from_words(&stream_words(&a))?;
/// assert_eq!(a.next_u64(), b.next_u64());
/// # Ok::<(), rotaframe::Error>(())
/// ```
#[must_use]
pub fn stream_words(stream: &Xoshiro256PlusPlus) -> [u64; 4] {
    let bytes = stream.state();
    core::array::from_fn(|i| {
        let mut word = [0u8; 8];
        word.copy_from_slice(&bytes[8 * i..8 * i + 8]);
        u64::from_le_bytes(word)
    })
}

/// A random stream resumed from the state words that [`stream_words`] saved.
///
/// # Errors
/// [`Error::Invalid`] naming `stream` for the all-zero state (one no seeded stream reaches).
pub fn stream_from_words(words: &[u64; 4]) -> Result<Xoshiro256PlusPlus> {
    if words.iter().all(|&w| w == 0) {
        return Err(Error::Invalid { quantity: "stream", reason: "the all-zero state is not a state of a seeded stream" });
    }
    let mut seed = [0u8; 32];
    for (chunk, word) in seed.chunks_exact_mut(8).zip(words) {
        chunk.copy_from_slice(&word.to_le_bytes());
    }
    Ok(Xoshiro256PlusPlus::from_seed(seed))
}

/// Converts an angle random walk from deg/√h to rad/√s (the white-noise rate density).
///
/// ```
/// use rotaframe::nav::angle_random_walk_from_deg_per_sqrt_hour;
/// assert!((angle_random_walk_from_deg_per_sqrt_hour(1.0) - 2.908882086657216e-4).abs() < 1e-18);
/// ```
#[must_use]
pub fn angle_random_walk_from_deg_per_sqrt_hour(deg_per_sqrt_hour: f64) -> f64 {
    deg_per_sqrt_hour.to_radians() / 60.0
}

/// Converts a velocity random walk from m/s/√h to m/s/√s.
///
/// ```
/// use rotaframe::nav::velocity_random_walk_from_mps_per_sqrt_hour;
/// assert_eq!(velocity_random_walk_from_mps_per_sqrt_hour(0.06), 0.001);
/// ```
#[must_use]
pub fn velocity_random_walk_from_mps_per_sqrt_hour(mps_per_sqrt_hour: f64) -> f64 {
    mps_per_sqrt_hour / 60.0
}

/// The error model of one sensor triad; see the [module documentation](self). Units are those
/// of the triad's output: rad/s for gyros, m/s² for accelerometers.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::nav::SensorErrorModel;
/// let gyro = SensorErrorModel { bias: Vector3::new(1e-6, 0.0, 0.0), ..SensorErrorModel::default() };
/// assert!(gyro.validate().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SensorErrorModel {
    /// Fixed bias per axis.
    pub bias: Vector3<f64>,
    /// Scale-factor error per axis (dimensionless).
    pub scale_factor: Vector3<f64>,
    /// Misalignment and cross-coupling (dimensionless, zero diagonal).
    pub misalignment: Matrix3<f64>,
    /// White-noise density per axis (units per √Hz, i.e. rad/√s or m/s/√s), non-negative.
    pub noise_density: Vector3<f64>,
    /// Gauss–Markov bias steady-state standard deviation per axis, non-negative.
    pub markov_sigma: Vector3<f64>,
    /// Gauss–Markov correlation time per axis (s), positive (infinity: a random constant).
    pub markov_time: Vector3<f64>,
}

impl Default for SensorErrorModel {
    /// A perfect sensor.
    fn default() -> Self {
        Self {
            bias: Vector3::zeros(),
            scale_factor: Vector3::zeros(),
            misalignment: Matrix3::zeros(),
            noise_density: Vector3::zeros(),
            markov_sigma: Vector3::zeros(),
            markov_time: Vector3::repeat(f64::INFINITY),
        }
    }
}

impl SensorErrorModel {
    /// Checks the model; errors name the rejected field (`bias`, `misalignment`, ...).
    ///
    /// Every field is finite and within the ranges below (wide enough for any real sensor;
    /// they keep the corrupted increments finite for any valid increment): bias,
    /// Gauss–Markov σ and noise density at most [`MAX_SENSOR_ERROR`] in magnitude (rad/s or
    /// m/s², per √Hz for the density), scale factors and misalignment entries at most 1
    /// (100 %). The all-zero model (with zero or infinite correlation times) is the perfect
    /// sensor.
    ///
    /// # Errors
    /// [`Error::NonFinite`], [`Error::BeyondLimit`], [`Error::Invalid`] (non-zero
    /// misalignment diagonal, negative noise or σ) or [`Error::NotPositive`] (`markov_time`).
    pub fn validate(&self) -> Result<()> {
        check_vector(&self.bias, MAX_SENSOR_ERROR, "sensor units", "bias")?;
        check_vector(&self.scale_factor, 1.0, "(dimensionless)", "scale_factor")?;
        ensure_finite(self.misalignment.as_slice(), "misalignment")?;
        let largest = self.misalignment.amax();
        if largest > 1.0 {
            return Err(Error::BeyondLimit { quantity: "misalignment", magnitude: largest, limit: 1.0, unit: "(dimensionless)" });
        }
        if self.misalignment.diagonal() != Vector3::zeros() {
            return Err(Error::Invalid { quantity: "misalignment", reason: "its diagonal must be zero (use scale_factor)" });
        }
        check_vector(&self.noise_density, MAX_SENSOR_ERROR, "sensor units per √Hz", "noise_density")?;
        if self.noise_density.iter().any(|&x| x < 0.0) {
            return Err(Error::Invalid { quantity: "noise_density", reason: "must be non-negative" });
        }
        check_vector(&self.markov_sigma, MAX_SENSOR_ERROR, "sensor units", "markov_sigma")?;
        if self.markov_sigma.iter().any(|&x| x < 0.0) {
            return Err(Error::Invalid { quantity: "markov_sigma", reason: "must be non-negative" });
        }
        for &tau in self.markov_time.iter() {
            if tau.is_nan() || tau <= 0.0 {
                return Err(Error::NotPositive { quantity: "markov_time", value: tau });
            }
        }
        Ok(())
    }
}

/// Largest magnitude of a sensor bias, Gauss–Markov σ or noise density (rad/s or m/s²; per
/// √Hz for densities) that [`SensorErrorModel::validate`] accepts: a million times a
/// consumer-grade gyro's bias, far beyond any sensor, small enough that corrupted increments
/// stay finite.
pub const MAX_SENSOR_ERROR: f64 = 1.0e3;

/// Error models of both triads.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ImuErrorModel {
    /// Gyro triad (rad/s).
    pub gyro: SensorErrorModel,
    /// Accelerometer triad (m/s²).
    pub accelerometer: SensorErrorModel,
}

impl ImuErrorModel {
    /// Checks both triads.
    ///
    /// # Errors
    /// As [`SensorErrorModel::validate`], the field named with its triad (`gyro_bias`,
    /// `accelerometer_noise_density`, ...).
    ///
    /// ```
    /// use nalgebra::Vector3;
    /// use rotaframe::nav::{ImuErrorModel, SensorErrorModel};
    /// let gyro = SensorErrorModel { noise_density: Vector3::repeat(-1.0), ..Default::default() };
    /// let e = ImuErrorModel { gyro, ..Default::default() }.validate().unwrap_err();
    /// assert_eq!(e.quantity(), "gyro_noise_density");
    /// ```
    pub fn validate(&self) -> Result<()> {
        self.gyro.validate().map_err(|e| qualify(e, true))?;
        self.accelerometer.validate().map_err(|e| qualify(e, false))
    }
}

/// Applies an [`ImuErrorModel`] to ideal increments, with its own seeded random stream and
/// Gauss–Markov states. No heap.
///
/// # Example
/// A tactical-grade gyro with 0.1 deg/√h angle random walk, on a stationary mount:
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::nav::{angle_random_walk_from_deg_per_sqrt_hour, ImuErrorGenerator, ImuErrorModel, ImuIncrement, SensorErrorModel};
/// let gyro = SensorErrorModel { noise_density: Vector3::repeat(angle_random_walk_from_deg_per_sqrt_hour(0.1)), ..Default::default() };
/// let model = ImuErrorModel { gyro, ..Default::default() };
/// let mut a = ImuErrorGenerator::new(model, 42).unwrap();
/// let mut b = ImuErrorGenerator::new(model, 42).unwrap();
/// let ideal = ImuIncrement::new(Vector3::zeros(), Vector3::zeros(), 0.01);
/// let (x, y) = (a.corrupt(&ideal).unwrap(), b.corrupt(&ideal).unwrap());
/// assert_eq!(x, y);                       // same seed, same numbers
/// assert!(x.delta_angle.norm() > 0.0);
/// ```
#[derive(Debug, Clone)]
pub struct ImuErrorGenerator {
    model: ImuErrorModel,
    rng: Xoshiro256PlusPlus,
    gyro_markov: Vector3<f64>,
    accelerometer_markov: Vector3<f64>,
}

impl ImuErrorGenerator {
    /// A generator for `model` whose random stream is fixed by `seed`. The Gauss–Markov
    /// states start from a draw of their steady-state distribution.
    ///
    /// # Errors
    /// As [`SensorErrorModel::validate`], the field named with its triad (`gyro_bias`,
    /// `accelerometer_noise_density`, ...).
    pub fn new(model: ImuErrorModel, seed: u64) -> Result<Self> {
        model.gyro.validate().map_err(|e| qualify(e, true))?;
        model.accelerometer.validate().map_err(|e| qualify(e, false))?;
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
        let gyro_markov = normal3(&mut rng).component_mul(&model.gyro.markov_sigma);
        let accelerometer_markov = normal3(&mut rng).component_mul(&model.accelerometer.markov_sigma);
        Ok(Self { model, rng, gyro_markov, accelerometer_markov })
    }

    /// A generator resumed from the parts returned by [`parts`](Self::parts) (for bindings
    /// that keep the state in their own structures).
    ///
    /// # Errors
    /// As [`new`](Self::new); [`Error::NonFinite`] naming `gyro_markov` or
    /// `accelerometer_markov`.
    pub fn from_parts(
        model: ImuErrorModel,
        rng: Xoshiro256PlusPlus,
        gyro_markov: Vector3<f64>,
        accelerometer_markov: Vector3<f64>,
    ) -> Result<Self> {
        model.gyro.validate().map_err(|e| qualify(e, true))?;
        model.accelerometer.validate().map_err(|e| qualify(e, false))?;
        ensure_finite3(&gyro_markov, "gyro_markov")?;
        ensure_finite3(&accelerometer_markov, "accelerometer_markov")?;
        Ok(Self { model, rng, gyro_markov, accelerometer_markov })
    }

    /// The model, the random stream's state and the Gauss–Markov states.
    #[must_use]
    pub fn parts(&self) -> (ImuErrorModel, Xoshiro256PlusPlus, Vector3<f64>, Vector3<f64>) {
        (self.model, self.rng.clone(), self.gyro_markov, self.accelerometer_markov)
    }

    /// The model applied.
    #[must_use]
    pub fn model(&self) -> &ImuErrorModel {
        &self.model
    }

    /// The current Gauss–Markov bias states (gyro rad/s, accelerometer m/s²).
    #[must_use]
    pub fn markov_states(&self) -> (Vector3<f64>, Vector3<f64>) {
        (self.gyro_markov, self.accelerometer_markov)
    }

    /// The measured increment for an ideal one, advancing the random stream and the
    /// Gauss–Markov states by one interval. On error nothing advances.
    ///
    /// # Errors
    /// As [`ImuIncrement::validate`].
    pub fn corrupt(&mut self, ideal: &ImuIncrement) -> Result<ImuIncrement> {
        ideal.validate()?;
        let t = ideal.interval;
        let delta_angle = apply(&self.model.gyro, &mut self.gyro_markov, &mut self.rng, &ideal.delta_angle, t);
        let delta_velocity =
            apply(&self.model.accelerometer, &mut self.accelerometer_markov, &mut self.rng, &ideal.delta_velocity, t);
        Ok(ImuIncrement { delta_angle, delta_velocity, interval: t })
    }
}

/// Names a rejected field with its triad (and gives a limit its triad's unit).
fn qualify(error: Error, gyro: bool) -> Error {
    let error = match error {
        Error::BeyondLimit { quantity, magnitude, limit, unit } => {
            let unit = match (gyro, unit) {
                (true, "sensor units") => "rad/s",
                (false, "sensor units") => "m/s²",
                (true, "sensor units per √Hz") => "rad/√s",
                (false, "sensor units per √Hz") => "m/s/√s",
                (_, other) => other,
            };
            Error::BeyondLimit { quantity, magnitude, limit, unit }
        }
        other => other,
    };
    let name = match (gyro, error.quantity()) {
        (true, "bias") => "gyro_bias",
        (true, "scale_factor") => "gyro_scale_factor",
        (true, "misalignment") => "gyro_misalignment",
        (true, "noise_density") => "gyro_noise_density",
        (true, "markov_sigma") => "gyro_markov_sigma",
        (true, "markov_time") => "gyro_markov_time",
        (false, "bias") => "accelerometer_bias",
        (false, "scale_factor") => "accelerometer_scale_factor",
        (false, "misalignment") => "accelerometer_misalignment",
        (false, "noise_density") => "accelerometer_noise_density",
        (false, "markov_sigma") => "accelerometer_markov_sigma",
        (false, "markov_time") => "accelerometer_markov_time",
        (_, other) => other,
    };
    error.with_quantity(name)
}

fn normal3(rng: &mut Xoshiro256PlusPlus) -> Vector3<f64> {
    let mut draw = || -> f64 { StandardNormal.sample(rng) };
    Vector3::new(draw(), draw(), draw())
}

/// One triad over one interval: the bias used is the Gauss–Markov state at the start of the
/// interval, which then advances.
fn apply(
    model: &SensorErrorModel,
    markov: &mut Vector3<f64>,
    rng: &mut Xoshiro256PlusPlus,
    ideal: &Vector3<f64>,
    t: f64,
) -> Vector3<f64> {
    let gain = Matrix3::identity() + Matrix3::from_diagonal(&model.scale_factor) + model.misalignment;
    let white = normal3(rng).component_mul(&model.noise_density) * math::sqrt(t);
    let measured = gain * ideal + (model.bias + *markov) * t + white;
    let drive = normal3(rng);
    for i in 0..3 {
        let decay = math::exp(-t / model.markov_time[i]);
        markov[i] = decay * markov[i] + model.markov_sigma[i] * math::sqrt(1.0 - decay * decay) * drive[i];
    }
    measured
}
