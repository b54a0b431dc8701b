//! Strapdown inertial navigation: position, velocity and attitude on the rotating Earth from
//! gyro angle increments and accelerometer velocity increments.
//!
//! Two mechanizations share one stepper, [`Strapdown`]:
//!
//! * **NED** (local level): latitude φ, longitude λ, height h, velocity `v^n` relative to the
//!   Earth resolved in NED, attitude `C_b^n`. Singular at the poles: a step that starts or
//!   ends within [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole returns [`Error::NearPole`].
//! * **ECEF** (Earth fixed): position `r^e`, velocity `v^e` relative to the Earth resolved in
//!   ECEF, attitude `C_b^e`. Regular everywhere, the poles included.
//!
//! Both report the same [`NavState`] (geodetic position, NED velocity, body-to-NED attitude)
//! and by default use the same gravity ([`GravityModel::Normal`]), so that they agree.
//!
//! # One step, `t_{k−1} → t_k = t_{k−1} + T`
//!
//! With increments `Δθ_k`, `Δv_k` and those of the previous interval (`Δθ_p`, `Δv_p`,
//! length `T_p`):
//!
//! ```text
//! c  = T² / (6 T_p (T + T_p))                              (= 1/12 at a fixed rate)
//! φ  = Δθ_k + c Δθ_p × Δθ_k                                 coning
//! Δv_b = Δv_k + a Δθ_k × Δv_k + b Δθ_k × (Δθ_k × Δv_k)        rotation
//!        + c (Δθ_p × Δv_k + Δv_p × Δθ_k)                     sculling
//! a = (1 − cos θ)/θ²,  b = (θ − sin θ)/θ³,  θ = |Δθ_k|        (≈ 1/2 and 1/6)
//! ```
//!
//! The coning and sculling terms are the two-sample corrections for angular rate and specific
//! force varying linearly across the two intervals (the "previous-cycle" form; J. W. Bortz,
//! "A new mathematical formulation for strapdown inertial navigation", IEEE Trans. AES-7
//! (1971); P. G. Savage, "Strapdown inertial navigation integration algorithm design",
//! J. Guidance, Control, and Dynamics 21 (1998) parts 1–2), written out for unequal intervals
//! so that a varying rate needs no special care. The rotation term is the exact
//! `∫ C_{b(t)}^{b(k−1)} f dt` for constant rate and specific force; its second-order part
//! `b Δθ × (Δθ × Δv)` matters: it always shortens `Δv` by `|Δθ|²/6`, so leaving it out
//! under vibration rectifies into a velocity drift (about 1e-5 m/s² on the closure
//! trajectory at 100 Hz, 400 times the error that remains with it). The first step after construction or
//! [`reset_history`](Strapdown::reset_history) has no previous interval and omits the `c`
//! terms.
//!
//! NED form, with `ω_ie^n` the Earth rate, `ω_en^n` the transport rate and `g^n` gravity,
//! evaluated at the middle of the interval, and `ζ = (ω_ie^n + ω_en^n) T`:
//!
//! ```text
//! C_b^n(k) = exp(−ζ) C_b^n(k−1) exp(φ)                       (quaternion products)
//! v(k) = v(k−1) + (I − ½ ζ×) C_b^n(k−1) Δv_b + [g^n − (2 ω_ie^n + ω_en^n) × v̄] T
//! h(k) = h(k−1) − v̄_D T,  φ(k) = φ(k−1) + v̄_N T / (M + h̄),  λ(k) = λ(k−1) + v̄_E T / ((N + h̄) cos φ̄)
//! ```
//!
//! ECEF form, with `ζ = Ω T ẑ`: `C_b^e(k) = exp(−ζ) C_b^e(k−1) exp(φ)`,
//! `v(k) = v(k−1) + (I − ½ ζ×) C_b^e(k−1) Δv_b + [g^e(r̄) − 2 Ω ẑ × v̄] T`,
//! `r(k) = r(k−1) + v̄ T` (P. D. Groves, *Principles of GNSS, Inertial, and Multisensor
//! Integrated Navigation Systems*, 2nd ed. (2013), ch. 5; D. H. Titterton and J. L. Weston,
//! *Strapdown Inertial Navigation Technology*, 2nd ed. (2004), ch. 3 and 11).
//!
//! Mid-interval values (barred) come from a predictor–corrector: the step is computed once
//! with the values at `t_{k−1}`, then again with the averages of the start and the predicted
//! end, `v̄ = ½ (v(k−1) + v(k))` and so on. This makes the slowly varying terms (gravity,
//! Coriolis, transport rate, curvature) second-order accurate; the body rotation within the
//! interval is handled by the coning and sculling terms above.
//!
//! # The vertical channel
//!
//! Gravity falls off with height, so a free inertial height error grows like
//! `exp(t √(2g/R))`, with a time constant of about 9.5 minutes: unaided height is useless
//! after tens of minutes. [`VerticalChannel`] chooses:
//!
//! * [`Free`](VerticalChannel::Free): pure inertial (short runs, tests);
//! * [`Hold`](VerticalChannel::Hold): height set to the external reference after every step
//!   and vertical velocity to its rate of change (a ship at sea level, a land vehicle on a
//!   known road profile, a Schuler test);
//! * [`Aided`](VerticalChannel::Aided): a second-order loop pulls the inertial height to the
//!   reference (a barometric altimeter, say) with error `δh = h − h_ref`:
//!   `ḣ = −v_D − k₁ δh`, `v̇_D = … + k₂ δh` with `k₁ = 2/τ`, `k₂ = 1/τ²` (critically damped, time
//!   constant τ). The loop is stable when `k₂ > 2g/R` (about `3.1e-6 s⁻²`), i.e. `τ < 570 s`
//!   ([`max_aided_time_constant`] takes the most demanding `g/R` of the model, at the poles:
//!   `√(b / 2γp)`, 568.5 s for WGS 84; longer time constants are refused);
//!   `τ` should also be many steps long. Set the reference with
//!   [`set_height_reference`](Strapdown::set_height_reference) before each step (or per step in
//!   [`run`](Strapdown::run)); it stays in force until changed and starts as the initial
//!   height. The reference must be an ellipsoidal height, like the state's.
//!
//! # Caution
//!
//! Not certified for safety-of-life navigation or guidance; validate against your own
//! requirements, applicable standards and licensed practice.

use nalgebra::{UnitQuaternion, Vector3};

use super::imu::ImuIncrement;
use crate::earth::geodetic::{check_geocentric, inverse_unchecked};
use crate::earth::gravity::{normal_gravity_at_height_unchecked, normal_gravity_ecef_at};
use crate::earth::local::{check_away_from_pole, earth_rate_ned_unchecked, radii_unchecked, transport_rate_unchecked};
use crate::earth::{EarthModel, Geodetic, GravityModel, ecef_from_ned_quaternion, geodetic_to_ecef};
use crate::error::{BatchError, Error, Result, ensure_finite1};
use crate::limits;
use crate::math;

/// Position, velocity and attitude as every mechanization reports them.
///
/// ```
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::earth::Geodetic;
/// use rotaframe::nav::NavState;
/// let s = NavState::new(Geodetic::from_degrees(60.0, 5.0, 0.0), Vector3::new(5.0, 0.0, 0.0), UnitQuaternion::identity());
/// assert!(s.validate().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct NavState {
    /// Geodetic position of the navigation reference point.
    pub position: Geodetic,
    /// Velocity relative to the Earth, resolved in NED (m/s).
    pub velocity_ned: Vector3<f64>,
    /// Attitude: the rotation mapping body coordinates to NED coordinates (`C_b^n`).
    pub attitude: UnitQuaternion<f64>,
}

impl NavState {
    /// A state from its parts (not validated; see [`validate`](Self::validate)).
    #[must_use]
    pub const fn new(position: Geodetic, velocity_ned: Vector3<f64>, attitude: UnitQuaternion<f64>) -> Self {
        Self { position, velocity_ned, attitude }
    }

    /// Checks that every part is finite, the latitude in range, the speed within
    /// [`MAX_VELOCITY`](limits::MAX_VELOCITY) and the attitude unit.
    ///
    /// # Errors
    /// As [`Geodetic::validate`]; [`Error::NonFinite`] or [`Error::BeyondLimit`] naming
    /// `velocity_ned`; [`Error::NotUnitQuaternion`] or [`Error::NonFinite`] naming `attitude`.
    pub fn validate(&self) -> Result<()> {
        self.position.validate()?;
        limits::check_vector(&self.velocity_ned, limits::MAX_VELOCITY, "m/s", "velocity_ned")?;
        check_unit(&self.attitude, "attitude")
    }

    /// As [`validate`](Self::validate), and the height within the supported range of `model`
    /// ([`Geodetic::validate_for`]).
    ///
    /// # Errors
    /// As [`validate`](Self::validate) and [`Geodetic::validate_for`].
    pub fn validate_for(&self, model: &EarthModel) -> Result<()> {
        self.validate()?;
        self.position.validate_for(model)
    }
}

fn check_unit(q: &UnitQuaternion<f64>, quantity: &'static str) -> Result<()> {
    crate::rotation::quaternion_from_wxyz([q.w, q.i, q.j, q.k], quantity).map(|_| ())
}

/// Which mechanization a [`Strapdown`] runs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[repr(u32)]
pub enum NavFrame {
    /// Local-level north-east-down: latitude, longitude, height, NED velocity.
    #[default]
    Ned = 0,
    /// Earth-centred Earth-fixed Cartesian: no singularity at the poles.
    Ecef = 1,
}

/// How the vertical channel is treated; see the [module documentation](self).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum VerticalChannel {
    /// Pure inertial height (unstable over tens of minutes).
    #[default]
    Free,
    /// Height set to the external reference after every step.
    Hold,
    /// Second-order loop to the external reference with time constant `time_constant` (s).
    Aided {
        /// Loop time constant τ (s), positive; gains `k₁ = 2/τ`, `k₂ = 1/τ²`.
        time_constant: f64,
    },
}

/// Settings of a [`Strapdown`] stepper.
///
/// ```
/// use rotaframe::nav::{NavFrame, StrapdownConfig};
/// let cfg = StrapdownConfig { frame: NavFrame::Ecef, ..StrapdownConfig::default() };
/// assert!(cfg.validate().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StrapdownConfig {
    /// The Earth model (ellipsoid, rotation rate, normal gravity).
    pub earth: EarthModel,
    /// The gravity field.
    pub gravity: GravityModel,
    /// The vertical channel treatment.
    pub vertical: VerticalChannel,
    /// The mechanization.
    pub frame: NavFrame,
}

impl Default for StrapdownConfig {
    /// WGS 84, normal gravity, free vertical channel, NED.
    fn default() -> Self {
        Self { earth: crate::earth::WGS84, gravity: GravityModel::Normal, vertical: VerticalChannel::Free, frame: NavFrame::Ned }
    }
}

impl StrapdownConfig {
    /// Checks the vertical-channel settings: an aided loop's time constant must be positive
    /// and no longer than [`max_aided_time_constant`] (beyond it the loop is unstable).
    ///
    /// # Errors
    /// [`Error::NotPositive`], [`Error::NonFinite`] or [`Error::OutOfRange`] naming
    /// `time_constant`.
    ///
    /// ```
    /// use rotaframe::nav::{StrapdownConfig, VerticalChannel};
    /// let cfg = StrapdownConfig { vertical: VerticalChannel::Aided { time_constant: 1e6 }, ..StrapdownConfig::default() };
    /// assert!(cfg.validate().unwrap_err().to_string().contains("568.5"));
    /// ```
    pub fn validate(&self) -> Result<()> {
        if let VerticalChannel::Aided { time_constant } = self.vertical {
            ensure_finite1(time_constant, "time_constant")?;
            if time_constant <= 0.0 {
                return Err(Error::NotPositive { quantity: "time_constant", value: time_constant });
            }
            let max = max_aided_time_constant(&self.earth);
            if time_constant > max {
                return Err(Error::OutOfRange { quantity: "time_constant", value: time_constant, min: 0.0, max });
            }
        }
        Ok(())
    }
}

/// The longest stable time constant of the aided vertical channel for `model` (s): the loop
/// needs `k₂ = 1/τ² > 2g/R`, and `2g/R` is largest at the poles, so `τ < √(b / 2γp)`
/// (568.5 s for WGS 84). The figure is rounded down to 0.1 s.
///
/// ```
/// use rotaframe::{earth::WGS84, nav::max_aided_time_constant};
/// assert_eq!(max_aided_time_constant(&WGS84), 568.5);
/// ```
#[must_use]
pub fn max_aided_time_constant(model: &EarthModel) -> f64 {
    math::floor(10.0 * math::sqrt(model.semi_minor_axis() / (2.0 * model.gamma_pole()))) / 10.0
}

impl StrapdownConfig {}

/// The state a mechanization integrates, in its own coordinates.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum MechanizationState {
    /// NED form.
    Ned {
        /// Geodetic position.
        position: Geodetic,
        /// Velocity relative to the Earth, resolved in NED (m/s).
        velocity_ned: Vector3<f64>,
        /// Body-to-NED rotation `C_b^n`.
        attitude: UnitQuaternion<f64>,
    },
    /// ECEF form.
    Ecef {
        /// Position in ECEF (m).
        position_ecef: Vector3<f64>,
        /// Velocity relative to the Earth, resolved in ECEF (m/s).
        velocity_ecef: Vector3<f64>,
        /// Body-to-ECEF rotation `C_b^e`.
        attitude_ecef: UnitQuaternion<f64>,
    },
}

/// What a [`Strapdown`] carries from one step to the next besides its state: the previous
/// increment (for the coning and sculling corrections), the external height reference and the
/// elapsed time.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct StepMemory {
    /// The previous step's increment, if the previous step is usable for the two-sample
    /// corrections.
    pub previous: Option<ImuIncrement>,
    /// External ellipsoidal height reference for [`VerticalChannel::Hold`] and
    /// [`VerticalChannel::Aided`] (m).
    pub height_reference: f64,
    /// Time since the initial state (s): the sum of the intervals stepped, rounded.
    pub elapsed: f64,
    /// The rounding error of `elapsed` (s), carried so that the sum stays exact to an ulp over
    /// any number of steps (Neumaier's compensated summation; without it a million 10 ms
    /// steps drift by about 1e-7 s).
    pub elapsed_correction: f64,
}

/// A heap-free strapdown navigation stepper; see the [module documentation](self).
///
/// # Example
/// A level survey van at rest at 45° N, fed its ideal IMU output for one minute at 100 Hz,
/// stays where it is:
/// ```
/// use approx::assert_abs_diff_eq;
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::earth::{earth_rate_ned, gravity_ned, Geodetic, WGS84};
/// use rotaframe::nav::{ImuIncrement, NavState, Strapdown, StrapdownConfig};
/// let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
/// let start = NavState::new(here, Vector3::zeros(), UnitQuaternion::identity());
/// let mut ins = Strapdown::new(StrapdownConfig::default(), &start).unwrap();
/// let dt = 0.01;
/// let inc = ImuIncrement::new(
///     earth_rate_ned(&WGS84, here.latitude).unwrap() * dt,
///     -gravity_ned(&WGS84, here.latitude, here.height).unwrap() * dt,
///     dt,
/// );
/// for _ in 0..6000 {
///     ins.step(&inc).unwrap();
/// }
/// assert_abs_diff_eq!(ins.state().velocity_ned.norm(), 0.0, epsilon = 1e-9);
/// assert_abs_diff_eq!(ins.state().position.height, 200.0, epsilon = 1e-7);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Strapdown {
    config: StrapdownConfig,
    state: MechanizationState,
    memory: StepMemory,
}

impl Strapdown {
    /// A stepper starting from `initial`, in the mechanization `config.frame`.
    ///
    /// # Errors
    /// As [`StrapdownConfig::validate`] and [`NavState::validate`]; [`Error::NearPole`]
    /// for the NED form within [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole.
    pub fn new(config: StrapdownConfig, initial: &NavState) -> Result<Self> {
        config.validate()?;
        initial.validate_for(&config.earth)?;
        let state = match config.frame {
            NavFrame::Ned => {
                check_away_from_pole(initial.position.latitude, "latitude")?;
                MechanizationState::Ned {
                    position: initial.position,
                    velocity_ned: initial.velocity_ned,
                    attitude: initial.attitude,
                }
            }
            NavFrame::Ecef => {
                let q_en = ecef_from_ned_quaternion(initial.position.latitude, initial.position.longitude)?;
                MechanizationState::Ecef {
                    position_ecef: geodetic_to_ecef(&config.earth, &initial.position)?,
                    velocity_ecef: q_en * initial.velocity_ned,
                    attitude_ecef: q_en * initial.attitude,
                }
            }
        };
        let memory =
            StepMemory { previous: None, height_reference: initial.position.height, elapsed: 0.0, elapsed_correction: 0.0 };
        Ok(Self { config, state, memory })
    }

    /// A stepper resumed from parts saved with [`parts`](Self::parts) (for bindings that keep
    /// the state in their own structures).
    ///
    /// # Errors
    /// [`Error::Invalid`] naming `state` if its form does not match `config.frame`; otherwise
    /// as [`new`](Self::new) for the state's parts and [`ImuIncrement::validate`] for the
    /// remembered increment.
    pub fn from_parts(config: StrapdownConfig, state: MechanizationState, memory: StepMemory) -> Result<Self> {
        config.validate()?;
        match (&state, config.frame) {
            (MechanizationState::Ned { position, velocity_ned, attitude }, NavFrame::Ned) => {
                NavState::new(*position, *velocity_ned, *attitude).validate_for(&config.earth)?;
                check_away_from_pole(position.latitude, "latitude")?;
            }
            (MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef }, NavFrame::Ecef) => {
                check_position_ecef(&config.earth, position_ecef)?;
                limits::check_vector(velocity_ecef, limits::MAX_VELOCITY, "m/s", "velocity_ecef")?;
                check_unit(attitude_ecef, "attitude_ecef")?;
            }
            _ => return Err(Error::Invalid { quantity: "state", reason: "its form does not match the configured frame" }),
        }
        if let Some(previous) = &memory.previous {
            previous.validate()?;
        }
        limits::check_height(&config.earth, memory.height_reference, "height_reference")?;
        ensure_finite1(memory.elapsed, "elapsed")?;
        if memory.elapsed < 0.0 {
            return Err(Error::OutOfRange { quantity: "elapsed", value: memory.elapsed, min: 0.0, max: f64::MAX });
        }
        // A compensated sum's correction is the accumulated rounding of the plain sum: about
        // one ulp per step at worst, so far below a millionth of the sum for any real run.
        let slack = 1e-6 * (1.0 + memory.elapsed);
        if memory.elapsed_correction.abs() > slack || memory.elapsed_correction.is_nan() {
            return Err(Error::OutOfRange {
                quantity: "elapsed_correction",
                value: memory.elapsed_correction,
                min: -slack,
                max: slack,
            });
        }
        Ok(Self { config, state, memory })
    }

    /// The configuration, the mechanization's own state and the step memory.
    #[must_use]
    pub fn parts(&self) -> (StrapdownConfig, MechanizationState, StepMemory) {
        (self.config, self.state, self.memory)
    }

    /// The configuration.
    #[must_use]
    pub fn config(&self) -> &StrapdownConfig {
        &self.config
    }

    /// Time since the initial state (s).
    #[must_use]
    pub fn elapsed(&self) -> f64 {
        self.memory.elapsed + self.memory.elapsed_correction
    }

    /// The current position, velocity and attitude. For the ECEF form near a pole the
    /// reported NED axes follow the meridian of the reported longitude (0 on the axis).
    #[must_use]
    pub fn state(&self) -> NavState {
        match self.state {
            MechanizationState::Ned { position, velocity_ned, attitude } => NavState { position, velocity_ned, attitude },
            MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef } => {
                let position = inverse_unchecked(&self.config.earth, &position_ecef);
                let q_ne = ned_quaternion(&position).inverse();
                NavState { position, velocity_ned: q_ne * velocity_ecef, attitude: q_ne * attitude_ecef }
            }
        }
    }

    /// Replaces the position, velocity and attitude (an external fix, a filter's correction),
    /// keeping the step memory: the previous increment for the coning and sculling terms,
    /// the height reference and the elapsed time. On error the stepper is unchanged.
    ///
    /// # Errors
    /// As [`NavState::validate_for`]; [`Error::NearPole`] for the NED form within
    /// [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole.
    ///
    /// ```
    /// use nalgebra::Vector3;
    /// use rotaframe::earth::Geodetic;
    /// use rotaframe::nav::{ImuIncrement, NavState, Strapdown, StrapdownConfig};
    /// let start = NavState::new(Geodetic::from_degrees(45.0, 7.0, 200.0), Vector3::zeros(), Default::default());
    /// let mut ins = Strapdown::new(StrapdownConfig::default(), &start).unwrap();
    /// ins.step(&ImuIncrement::new(Vector3::zeros(), Vector3::new(0.0, 0.0, -0.098), 0.01)).unwrap();
    /// ins.set_state(&start).unwrap();
    /// assert_eq!(ins.state().position, start.position);
    /// assert!((ins.elapsed() - 0.01).abs() < 1e-15); // the time and the step memory stay
    /// ```
    pub fn set_state(&mut self, state: &NavState) -> Result<()> {
        let memory = self.memory;
        let mut fresh = Strapdown::new(self.config, state)?;
        fresh.memory = memory;
        *self = fresh;
        Ok(())
    }

    /// Removes an estimated error from the state, in the mechanization's own error
    /// coordinates (the [`linearise::inertial`](crate::linearise::inertial) state order, errors
    /// estimate minus truth): NED form `position_error = (δφ, δλ, δh)` (rad, rad, m), ECEF form
    /// `δr^e` (m); `velocity_error` in the mechanization's axes (m/s); `attitude_error` the
    /// parent-side small rotation ψ with `Ĉ = (I + [ψ×]) C` (rad), removed as `C ← exp(−ψ) Ĉ`.
    /// The step memory is kept. On error the stepper is unchanged.
    ///
    /// # Errors
    /// [`Error::NonFinite`] naming the argument; as [`set_state`](Self::set_state) for the
    /// corrected state (the NED form's `NearPole`; a position or velocity outside the
    /// supported ranges).
    ///
    /// ```
    /// use nalgebra::Vector3;
    /// use rotaframe::earth::Geodetic;
    /// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
    /// let start = NavState::new(Geodetic::from_degrees(45.0, 7.0, 200.0), Vector3::new(1.0, 0.0, 0.0), Default::default());
    /// let mut ins = Strapdown::new(StrapdownConfig::default(), &start).unwrap();
    /// ins.remove_error(&Vector3::new(0.0, 0.0, 2.0), &Vector3::new(0.5, 0.0, 0.0), &Vector3::zeros()).unwrap();
    /// assert!((ins.state().position.height - 198.0).abs() < 1e-9);
    /// assert!((ins.state().velocity_ned.x - 0.5).abs() < 1e-12);
    /// ```
    pub fn remove_error(
        &mut self,
        position_error: &Vector3<f64>,
        velocity_error: &Vector3<f64>,
        attitude_error: &Vector3<f64>,
    ) -> Result<()> {
        crate::error::ensure_finite3(position_error, "position_error")?;
        crate::error::ensure_finite3(velocity_error, "velocity_error")?;
        crate::error::ensure_finite3(attitude_error, "attitude_error")?;
        let undo = UnitQuaternion::from_scaled_axis(-attitude_error);
        let state = match self.state {
            MechanizationState::Ned { position, velocity_ned, attitude } => MechanizationState::Ned {
                position: Geodetic {
                    latitude: position.latitude - position_error.x,
                    longitude: wrap_longitude(position.longitude - position_error.y),
                    height: position.height - position_error.z,
                },
                velocity_ned: velocity_ned - velocity_error,
                attitude: renormalise(undo * attitude),
            },
            MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef } => MechanizationState::Ecef {
                position_ecef: position_ecef - position_error,
                velocity_ecef: velocity_ecef - velocity_error,
                attitude_ecef: renormalise(undo * attitude_ecef),
            },
        };
        *self = Strapdown::from_parts(self.config, state, self.memory)?;
        Ok(())
    }

    /// Sets the external height reference (ellipsoidal, m) used by the
    /// [`Hold`](VerticalChannel::Hold) and [`Aided`](VerticalChannel::Aided) vertical channels
    /// from the next step on. Ignored by [`Free`](VerticalChannel::Free).
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::OutOfRange`] (outside the supported heights of the
    /// model, [`Geodetic::validate_for`]) naming `height_reference`.
    pub fn set_height_reference(&mut self, height_reference: f64) -> Result<()> {
        limits::check_height(&self.config.earth, height_reference, "height_reference")?;
        self.memory.height_reference = height_reference;
        Ok(())
    }

    /// Forgets the previous increment, so that the next step applies no two-sample
    /// corrections (after a data gap or a change of sensor).
    pub fn reset_history(&mut self) {
        self.memory.previous = None;
    }

    /// Advances the state by one IMU increment. On error the stepper is unchanged.
    ///
    /// # Errors
    /// As [`ImuIncrement::validate`]; [`Error::NearPole`] (NED form) if the step starts or
    /// ends within [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole; [`Error::NearEarthCentre`] (ECEF form) if the
    /// position leaves the region where gravity is defined.
    pub fn step(&mut self, increment: &ImuIncrement) -> Result<()> {
        crate::fast_call!(step_fast, step_body, (self, increment))
    }

    /// The body of [`step`](Self::step), inlined into both CPU code paths.
    #[inline(always)]
    fn step_on_this_cpu(&mut self, increment: &ImuIncrement) -> Result<()> {
        increment.validate()?;
        let body = corrected_increments(increment, self.memory.previous.as_ref());
        let state = match &self.state {
            MechanizationState::Ned { position, velocity_ned, attitude } => {
                self.step_ned(position, velocity_ned, attitude, &body)?
            }
            MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef } => {
                self.step_ecef(position_ecef, velocity_ecef, attitude_ecef, &body)?
            }
        };
        self.state = state;
        self.memory.previous = Some(*increment);
        // Neumaier's compensated sum (A. Neumaier, ZAMM 54 (1974) 39–51).
        let (sum, t) = (self.memory.elapsed + increment.interval, increment.interval);
        let e = &mut self.memory;
        e.elapsed_correction += if e.elapsed.abs() >= t.abs() { (e.elapsed - sum) + t } else { (t - sum) + e.elapsed };
        e.elapsed = sum;
        Ok(())
    }

    /// Runs every increment in turn and writes the state after each step to `out`. With
    /// `height_reference`, element `k` is set as the height reference before step `k`.
    ///
    /// Nothing is written and the stepper is unchanged if any step fails: the steps are first
    /// run on a copy, then repeated writing the results (so this costs two passes; call
    /// [`step`](Self::step) in a loop where every cycle counts).
    ///
    /// # Errors
    /// [`BatchError`] with the index of the first failing step (see [`step`](Self::step)),
    /// or [`Error::LengthMismatch`] (index 0) if the slices differ in length.
    pub fn run(
        &mut self,
        increments: &[ImuIncrement],
        height_reference: Option<&[f64]>,
        out: &mut [NavState],
    ) -> core::result::Result<(), BatchError> {
        let mismatch = |quantity, found| BatchError {
            index: 0,
            error: Error::LengthMismatch { quantity, found, expected: increments.len() },
        };
        if out.len() != increments.len() {
            return Err(mismatch("out", out.len()));
        }
        if let Some(h) = height_reference
            && h.len() != increments.len()
        {
            return Err(mismatch("height_reference", h.len()));
        }
        let mut trial = *self;
        trial.run_each(increments, height_reference, |_, _| {})?;
        self.run_each(increments, height_reference, |k, s| out[k] = s.state())
    }

    /// As [`run`](Self::run), but hands the stepper after each step to `sink(index, stepper)`
    /// (read its [`state`](Self::state) and [`elapsed`](Self::elapsed) there), in one pass. On error the stepper is restored to where it started; states
    /// already handed out stay with the sink (bindings that fill a fresh array discard it).
    ///
    /// # Errors
    /// As [`run`](Self::run).
    pub fn run_each<F: FnMut(usize, &Strapdown)>(
        &mut self,
        increments: &[ImuIncrement],
        height_reference: Option<&[f64]>,
        mut sink: F,
    ) -> core::result::Result<(), BatchError> {
        let start = *self;
        for (index, increment) in increments.iter().enumerate() {
            let result = match height_reference.and_then(|h| h.get(index)) {
                Some(&h) => self.set_height_reference(h),
                None => Ok(()),
            }
            .and_then(|()| self.step(increment));
            if let Err(error) = result {
                *self = start;
                return Err(BatchError { index, error });
            }
            sink(index, self);
        }
        Ok(())
    }

    #[inline(always)]
    fn step_ned(
        &self,
        position: &Geodetic,
        velocity: &Vector3<f64>,
        attitude: &UnitQuaternion<f64>,
        body: &BodyStep,
    ) -> Result<MechanizationState> {
        let model = &self.config.earth;
        let t = body.interval;
        let q_body = UnitQuaternion::from_scaled_axis(body.rotation);
        let specific = attitude * body.velocity_change;
        let (lat0, lon0, h0) = (position.latitude, position.longitude, position.height);
        let height_error = h0 - self.memory.height_reference;
        // Predictor (start values), then corrector (mid-interval values).
        let (mut lat_mid, mut lon_mid, mut h_mid, mut v_mid) = (lat0, lon0, h0, *velocity);
        let mut next = (*position, *velocity, *attitude);
        for _ in 0..2 {
            let (s, c) = math::sin_cos(lat_mid);
            let radii = radii_unchecked(model, s);
            let earth_rate = earth_rate_ned_unchecked(model, s, c);
            let transport = transport_rate_unchecked(&radii, s, c, h_mid, &v_mid);
            let zeta = (earth_rate + transport) * t;
            let gravity = match self.config.gravity {
                GravityModel::Normal => Vector3::new(0.0, 0.0, normal_gravity_at_height_unchecked(model, s * s, h_mid)),
                GravityModel::J2 => GravityModel::J2.gravity_ned(model, &Geodetic::new(lat_mid, lon_mid, h_mid))?,
            };
            let coriolis = -(2.0 * earth_rate + transport).cross(&v_mid);
            let mut v = velocity + specific - 0.5 * zeta.cross(&specific) + (gravity + coriolis) * t;
            let mut v_avg = 0.5 * (velocity + v);
            let mut h = h0 - v_avg.z * t;
            match self.config.vertical {
                VerticalChannel::Free => {}
                VerticalChannel::Hold => {
                    h = self.memory.height_reference;
                    v.z = -(h - h0) / t;
                    v_avg.z = v.z;
                }
                VerticalChannel::Aided { time_constant } => {
                    let (k1, k2) = (2.0 / time_constant, 1.0 / (time_constant * time_constant));
                    v.z += k2 * height_error * t;
                    h -= k1 * height_error * t;
                }
            }
            let lat = lat0 + v_avg.x * t / (radii.meridian + h_mid);
            let lon = lon0 + v_avg.y * t / ((radii.prime_vertical + h_mid) * c);
            check_away_from_pole(lat, "latitude")?;
            let q = UnitQuaternion::from_scaled_axis(-zeta) * attitude * q_body;
            next = (Geodetic::new(lat, lon, h), v, q);
            lat_mid = 0.5 * (lat0 + lat);
            lon_mid = 0.5 * (lon0 + lon);
            h_mid = 0.5 * (h0 + h);
            v_mid = v_avg;
        }
        let (mut position, velocity_ned, attitude) = next;
        position.longitude = wrap_longitude(position.longitude);
        limits::check_height(model, position.height, "height")?;
        limits::check_vector(&velocity_ned, limits::MAX_VELOCITY, "m/s", "velocity_ned")?;
        Ok(MechanizationState::Ned { position, velocity_ned, attitude: renormalise(attitude) })
    }

    #[inline(always)]
    fn step_ecef(
        &self,
        position: &Vector3<f64>,
        velocity: &Vector3<f64>,
        attitude: &UnitQuaternion<f64>,
        body: &BodyStep,
    ) -> Result<MechanizationState> {
        let model = &self.config.earth;
        let t = body.interval;
        let earth_rate = Vector3::new(0.0, 0.0, model.rotation_rate());
        let zeta = earth_rate * t;
        let specific = attitude * body.velocity_change;
        let specific = specific - 0.5 * zeta.cross(&specific);
        let q = UnitQuaternion::from_scaled_axis(-zeta) * attitude * UnitQuaternion::from_scaled_axis(body.rotation);
        // The geodetic start point serves the first pass's normal gravity and the vertical
        // channel, which works along the ellipsoidal normal at the start of the step.
        let needs_start = self.config.gravity == GravityModel::Normal || self.config.vertical != VerticalChannel::Free;
        let start = if needs_start { inverse_unchecked(model, position) } else { Geodetic::default() };
        let up = up_direction(&start);
        let height_error = start.height - self.memory.height_reference;
        let (mut r_mid, mut v_mid) = (*position, *velocity);
        let mut next = (*position, *velocity);
        for pass in 0..2 {
            check_position_ecef(model, &r_mid)?;
            let gravity = match self.config.gravity {
                GravityModel::Normal if pass == 0 => normal_gravity_ecef_at(model, &r_mid, &start),
                GravityModel::Normal => normal_gravity_ecef_at(model, &r_mid, &inverse_unchecked(model, &r_mid)),
                GravityModel::J2 => GravityModel::J2.gravity_ecef(model, &r_mid)?,
            };
            let coriolis = -2.0 * earth_rate.cross(&v_mid);
            let mut v = velocity + specific + (gravity + coriolis) * t;
            let mut r = position + 0.5 * (velocity + v) * t;
            match self.config.vertical {
                VerticalChannel::Free => {}
                VerticalChannel::Hold => {
                    let end = inverse_unchecked(model, &r);
                    r += (self.memory.height_reference - end.height) * up_direction(&end);
                    let climb = (self.memory.height_reference - start.height) / t;
                    v += (climb - v.dot(&up)) * up;
                }
                VerticalChannel::Aided { time_constant } => {
                    let (k1, k2) = (2.0 / time_constant, 1.0 / (time_constant * time_constant));
                    v -= k2 * height_error * t * up;
                    r -= k1 * height_error * t * up;
                }
            }
            next = (r, v);
            r_mid = 0.5 * (position + r);
            v_mid = 0.5 * (velocity + v);
        }
        let (position_ecef, velocity_ecef) = next;
        check_position_ecef(model, &position_ecef)?;
        limits::check_vector(&velocity_ecef, limits::MAX_VELOCITY, "m/s", "velocity_ecef")?;
        Ok(MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef: renormalise(q) })
    }
}

/// The body of [`Strapdown::step`], inlined into both CPU code paths.
#[inline(always)]
fn step_body(stepper: &mut Strapdown, increment: &ImuIncrement) -> Result<()> {
    stepper.step_on_this_cpu(increment)
}
crate::fast_twin!(fn step_fast(stepper: &mut Strapdown, increment: &ImuIncrement) -> Result<()> = step_body);

/// One interval's body motion after the coning, rotation and sculling corrections.
struct BodyStep {
    /// Rotation vector of `b(k)` relative to `b(k−1)` (rad).
    rotation: Vector3<f64>,
    /// Velocity change from specific force, in the `b(k−1)` axes frozen in inertial space (m/s).
    velocity_change: Vector3<f64>,
    /// Interval length (s).
    interval: f64,
}

/// The two-sample coning and sculling corrections; see the [module documentation](self).
#[inline(always)]
fn corrected_increments(increment: &ImuIncrement, previous: Option<&ImuIncrement>) -> BodyStep {
    let (dtheta, dv) = (&increment.delta_angle, &increment.delta_velocity);
    let mut phi = *dtheta;
    let (first, second) = rotation_compensation_factors(dtheta.norm_squared());
    let turned = dtheta.cross(dv);
    let mut dv_body = dv + first * turned + second * dtheta.cross(&turned);
    if let Some(p) = previous {
        let t = increment.interval;
        let c = t * t / (6.0 * p.interval * (t + p.interval));
        phi += c * p.delta_angle.cross(dtheta);
        dv_body += c * (p.delta_angle.cross(dv) + p.delta_velocity.cross(dtheta));
    }
    BodyStep { rotation: phi, velocity_change: dv_body, interval: increment.interval }
}

/// `(1 − cos θ)/θ²` and `(θ − sin θ)/θ³` for `θ² = theta2`: the exact rotation compensation
/// `∫ C(t) f dt` for a constant rate and specific force over the interval is
/// `Δv + (1 − cos θ)/θ² Δθ × Δv + (θ − sin θ)/θ³ Δθ × (Δθ × Δv)`. Taylor series below
/// θ = 0.05 rad, where they are exact to rounding (next terms θ⁶/40320 and θ⁶/362880).
#[inline(always)]
fn rotation_compensation_factors(theta2: f64) -> (f64, f64) {
    if theta2 < 0.0025 {
        (0.5 - theta2 / 24.0 + theta2 * theta2 / 720.0, 1.0 / 6.0 - theta2 / 120.0 + theta2 * theta2 / 5040.0)
    } else {
        let theta = math::sqrt(theta2);
        let half = math::sin(0.5 * theta);
        (2.0 * half * half / theta2, (theta - math::sin(theta)) / (theta2 * theta))
    }
}

/// An ECEF navigation position: within [`MAX_GEOCENTRIC_DISTANCE`](limits::MAX_GEOCENTRIC_DISTANCE)
/// of the centre and at least half the semi-minor axis from it (the inner limit of
/// [`limits`], which also bounds the heights of the NED form).
#[inline(always)]
fn check_position_ecef(model: &EarthModel, position: &Vector3<f64>) -> Result<()> {
    // Half the semi-minor axis is far outside the centre region of geodetic non-uniqueness, so
    // one check covers both.
    check_geocentric(position, (0.5 * model.semi_minor_axis()).max(model.centre_exclusion_radius()), "position_ecef")
}

/// `C_n^e` for a validated geodetic position.
#[inline(always)]
fn ned_quaternion(position: &Geodetic) -> UnitQuaternion<f64> {
    ecef_from_ned_quaternion(position.latitude, position.longitude).unwrap_or_else(|_| UnitQuaternion::identity())
}

/// The upward ellipsoidal normal, resolved in ECEF.
#[inline(always)]
fn up_direction(position: &Geodetic) -> Vector3<f64> {
    let (s, c) = math::sin_cos(position.latitude);
    let (so, co) = math::sin_cos(position.longitude);
    Vector3::new(c * co, c * so, s)
}

/// Renormalises a quaternion product (each product adds about an ulp of norm error).
#[inline(always)]
fn renormalise(q: UnitQuaternion<f64>) -> UnitQuaternion<f64> {
    UnitQuaternion::new_normalize(q.into_inner())
}

/// Brings a longitude that has just crossed ±π back into (−π, π].
#[inline(always)]
fn wrap_longitude(longitude: f64) -> f64 {
    use core::f64::consts::{PI, TAU};
    if longitude > PI {
        longitude - TAU
    } else if longitude <= -PI {
        longitude + TAU
    } else {
        longitude
    }
}
