//! Aided inertial navigation: a closed-loop error-state (indirect) extended Kalman filter
//! around the [`Strapdown`](crate::nav::Strapdown) stepper, its measurements, innovation
//! gating and initial alignment.
//!
//! * [`filter`]: [`AidedFilter`], heap-free and generic over 15 or 21 states;
//! * [`navigator`]: [`AidedNavigator`], either size chosen at run time, with a clock and the
//!   run over an IMU log and measurement sets;
//! * [`measurement`]: the measurements ([`Measurement`]), whose models are those of
//!   [`linearise::aiding`](crate::linearise::aiding);
//! * [`gate`]: the chi-square quantile of the innovation gate;
//! * [`interpolate`]: a solution between two IMU times, stepped consistently with the
//!   mechanization;
//! * [`align`]: stationary coarse alignment and heading from the course over ground;
//! * [`smoother`] (with `alloc`): the fixed-interval (Rauch–Tung–Striebel) smoother of a
//!   recorded run, in the modified Bryson–Frazier form.
//!
//! # The filter
//!
//! The error state `δx` is that of [`linearise::inertial`](crate::linearise::inertial)
//! (estimate minus truth; the sensor-error states the error left in the *compensated*
//! measurements). Per IMU increment:
//!
//! ```text
//! compensate   Δθ_c = (I + diag(ŝ_g) + M_g)⁻¹ (Δθ − b̂_g T),  Δv_c likewise
//! mechanize    the strapdown step with Δθ_c, Δv_c
//! propagate    P ← Φ P Φᵀ + Q_d,  Φ = I + F T + F² T²/2,  Q_d = Q_c T + (F Q_c + Q_c Fᵀ) T²/2
//! ```
//!
//! with `F`, `G` from [`error_model`](crate::linearise::inertial::error_model) at the state at
//! the start of the increment and its compensated rates (the second-order form of
//! [`discretise_second_order`](crate::linearise::inertial::discretise_second_order)); or,
//! with [`FilterSettings::propagate_every`] `= k > 1`, once per `k` increments with the exact
//! [`discretise`](crate::linearise::inertial::discretise) over their summed interval.
//!
//! Per measurement `z` with model `ẑ(x̂)`, Jacobian `H = ∂ẑ/∂δx` and noise `R`:
//!
//! ```text
//! y = z − ẑ,  S = H P Hᵀ + R,  NIS = yᵀ S⁻¹ y          gate: accept when NIS ≤ χ²_m(p)
//! K = P Hᵀ S⁻¹,  δx̂ = −K y                              (ẑ − z ≈ H δx)
//! P ← (I − K H) P (I − K H)ᵀ + K R Kᵀ                   Joseph form
//! ```
//!
//! Closed loop: `δx̂` is fed back at once (position, velocity and attitude removed from the
//! stepper with [`Strapdown::remove_error`](crate::nav::Strapdown::remove_error), the
//! residual biases and scale factors added to the compensation) and the error state is reset
//! to zero, so it never needs propagating; the covariance is kept as it is (the reset's own
//! Jacobian, `I − ½[δψ×]` on the attitude block, is dropped: first order in a small
//! correction, common practice). The Gauss–Markov parts of the bias estimates decay as
//! `e^{−T/τ}` between updates, as their truth does on average. A rejected measurement changes
//! nothing.
//!
//! (R. E. Kalman, "A new approach to linear filtering and prediction problems", Trans. ASME
//! J. Basic Eng. 82 (1960); the error-state form and the feedback: P. S. Maybeck, *Stochastic
//! Models, Estimation, and Control*, vol. 1 (1979), ch. 6, and Groves (2013), §14.1–14.3; the
//! Joseph form: R. S. Bucy and P. D. Joseph, *Filtering for Stochastic Processes* (1968); NIS
//! gating: Y. Bar-Shalom, X. R. Li and T. Kirubarajan, *Estimation with Applications to
//! Tracking and Navigation* (2001), §5.4; section numbers from memory.)
//!
//! # Caution
//!
//! Not certified for safety-of-life navigation or guidance; validate against your own
//! requirements, applicable standards and licensed practice.

pub mod align;
#[cfg(feature = "alloc")]
pub mod budget;
pub mod filter;
pub mod gate;
pub mod interpolate;
pub mod measurement;
pub mod navigator;
#[cfg(feature = "alloc")]
pub mod smoother;

pub use align::{Alignment, StationaryRecord, align_stationary, heading_from_course};
pub use filter::{AidedFilter, FilterMemory, FilterSettings, Gain, SensorEstimate, UpdateReport};
pub use gate::{MAX_ROWS, chi_square_quantile};
pub use interpolate::state_between;
pub use measurement::{MAX_LEVER_ARM, Measurement};
pub use navigator::{
    AidedNavigator, GainTrace, MAX_MEASUREMENT_SETS, MeasurementSet, MeasurementSlices, RunSink, TIME_SNAP,
    check_measurement_times,
};
#[cfg(feature = "alloc")]
pub use smoother::{Adjoint, CHECKPOINT_EVERY, SmoothedPoint, SmoothedSink, SmootherLog, SmootherRecorder};
