//! Earth rotation: the Earth Rotation Angle and the motion of ECEF relative to an
//! Earth-centred inertial frame.
//!
//! # Earth Rotation Angle
//!
//! IERS Conventions (2010), IERS Technical Note 36, eq. (5.15):
//!
//! ```text
//! θ(Tu) = 2π (0.7790572732640 + 1.00273781191135448 Tu),   Tu = JD(UT1) − 2451545.0
//! ```
//!
//! The Julian date is taken in two parts (`jd_ut1 + jd_ut1_fraction`, split any way, e.g. the
//! day number and the fraction of the day) and, as the Conventions recommend, the whole days of
//! `Tu` are removed before multiplying:
//!
//! ```text
//! θ = 2π · frac(0.7790572732640 + 0.00273781191135448 Tu + frac(jd_ut1) + frac(jd_ut1_fraction))
//! ```
//!
//! An f64 Julian date on its own resolves only about 40 µs; two parts keep the angle good to
//! well under a microsecond of time.
//!
//! # The inertial frame used here
//!
//! [`earth_motion`] rotates ECEF about the common z axis at the model's rate `Ω` relative to
//! [`Eci`]. This `Eci` is the frame that the Earth-rotation angle is measured in, with its
//! z axis held along the Earth's rotation axis. It ignores:
//!
//! * precession of the rotation axis (about 50″ per year: 0.14″ or 0.7 µrad per day);
//! * nutation (amplitude up to about 17″, main period 18.6 years, smaller terms down to days);
//! * polar motion (about 0.3″, some 10 m at the surface, periods of about 433 and 365 days);
//! * variations of the rotation rate (length of day changes of about 1 ms).
//!
//! Over a navigation run of hours to days these move the axes by well under a microradian and
//! change the frame's angular velocity by about 1e-11 rad/s, some 500 times less than the bias
//! of a navigation-grade gyro (0.01 °/h ≈ 5e-8 rad/s). That is why inertial navigation
//! mechanizes in this simplified frame. Celestial pointing, orbit determination and
//! anything that must agree with the stars to better than a microradian need the full IERS
//! transformation: [`celestial`](super::celestial) (GCRS and ITRS).
//!
//! # Which rate
//!
//! The Earth-rotation-angle rate [`ERA_RATE`] (2π × 1.00273781191135448 per UT1 day,
//! 7.292115146706979e-5 rad/s) and the WGS 84 `Ω` (7.292115e-5 rad/s) differ by 2 parts in
//! 10⁸ (about 0.03″ a day). Wherever a UT1 date is given, the angle and the rate are the ERA's:
//! [`earth_motion_at_ut1`] and the frame graph's Earth edge with a UT1 epoch
//! ([`EarthRotation::at_ut1_epoch`](crate::graph::EarthRotation::at_ut1_epoch), whose time is
//! UT1 seconds after the epoch). [`earth_motion`], given an angle and no date, turns at the
//! model's `Ω` (the rate inertial navigation mechanizes with).

use nalgebra::Vector3;

use super::model::EarthModel;
use crate::error::{Result, ensure_finite1};
use crate::frames::{Ecef, Eci};
use crate::math;
use crate::motion::FrameMotion;

/// Earth Rotation Angle at J2000.0, in turns (IERS Conventions 2010, eq. 5.15).
pub const ERA_AT_J2000_TURNS: f64 = 0.779_057_273_264_0;
/// Earth Rotation Angle rate in turns per UT1 day (IERS Conventions 2010, eq. 5.15; the
/// published digits are kept although f64 holds about 16 of them).
#[allow(clippy::excessive_precision)]
pub const ERA_TURNS_PER_UT1_DAY: f64 = 1.002_737_811_911_354_48;
/// The fractional part of [`ERA_TURNS_PER_UT1_DAY`] (exactly 0.00273781191135448 in decimal;
/// written out rather than computed as `ERA_TURNS_PER_UT1_DAY − 1`, which would lose 4e-14 of
/// it to rounding).
#[allow(clippy::excessive_precision)]
const ERA_EXCESS_TURNS_PER_UT1_DAY: f64 = 0.002_737_811_911_354_48;
/// The Earth Rotation Angle's rate (rad per second of UT1): 2π × [`ERA_TURNS_PER_UT1_DAY`] /
/// 86400 = 7.292115146706979e-5 (IERS Conventions 2010, eq. 5.15).
pub const ERA_RATE: f64 = core::f64::consts::TAU * ERA_TURNS_PER_UT1_DAY / 86_400.0;

/// Julian date of the J2000.0 epoch (2000 January 1, 12h).
pub const J2000_JULIAN_DATE: f64 = 2_451_545.0;

/// Largest magnitude of either part of a Julian date (days): about 2.7 million years either
/// side of the epoch of Julian dates, far beyond the validity of the rotation model.
pub const MAX_JULIAN_DATE: f64 = crate::time::MAX_JULIAN_DAY;

/// The Earth Rotation Angle (rad, in [0, 2π)) at the UT1 Julian date `jd_ut1 + jd_ut1_fraction`.
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) or
/// [`Error::BeyondLimit`](crate::Error::BeyondLimit) (beyond [`MAX_JULIAN_DATE`]) naming the
/// bad part.
///
/// # Example
/// At J2000.0 the angle is 2π × 0.7790572732640 (IERS Conventions 2010):
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::earth_rotation_angle;
/// let theta = earth_rotation_angle(2451545.0, 0.0).unwrap();
/// assert_relative_eq!(theta, 2.0 * std::f64::consts::PI * 0.7790572732640, max_relative = 1e-15);
/// ```
pub fn earth_rotation_angle(jd_ut1: f64, jd_ut1_fraction: f64) -> Result<f64> {
    crate::limits::check_scalar(jd_ut1, MAX_JULIAN_DATE, "days", "jd_ut1")?;
    crate::limits::check_scalar(jd_ut1_fraction, MAX_JULIAN_DATE, "days", "jd_ut1_fraction")?;
    let (d1, d2) = if jd_ut1.abs() >= jd_ut1_fraction.abs() { (jd_ut1, jd_ut1_fraction) } else { (jd_ut1_fraction, jd_ut1) };
    let tu = (d1 - J2000_JULIAN_DATE) + d2;
    let frac = |x: f64| x - math::floor(x);
    let turns = frac(ERA_AT_J2000_TURNS + ERA_EXCESS_TURNS_PER_UT1_DAY * tu + frac(d1) + frac(d2));
    let angle = core::f64::consts::TAU * turns;
    Ok(if angle >= core::f64::consts::TAU { 0.0 } else { angle })
}

/// The motion of ECEF relative to [`Eci`] at `time` seconds after an epoch at which the
/// Earth-rotation angle was `angle_at_epoch` (rad): a rotation about z by
/// `angle_at_epoch + Ω·time` at the model's rate `Ω`, with coincident origins.
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) naming the bad argument.
///
/// # Example
/// ```
/// use approx::assert_relative_eq;
/// use rotaframe::earth::{earth_motion, WGS84};
/// let m = earth_motion(&WGS84, 3600.0, 0.0).unwrap();
/// assert_relative_eq!(m.rotation().angle(), 7.292115e-5 * 3600.0, max_relative = 1e-14);
/// ```
#[inline(always)]
pub fn earth_motion(model: &EarthModel, time: f64, angle_at_epoch: f64) -> Result<FrameMotion<Eci, Ecef>> {
    earth_motion_at_rate(model.rotation_rate(), time, angle_at_epoch)
}

/// The motion of ECEF relative to [`Eci`] at a UT1 Julian date: the rotation angle is the
/// Earth Rotation Angle ([`earth_rotation_angle`]) and the rate [`ERA_RATE`].
///
/// # Errors
/// As [`earth_rotation_angle`].
///
/// ```
/// use rotaframe::earth::{earth_motion_at_ut1, ERA_RATE};
/// let m = earth_motion_at_ut1(2_460_000.5, 0.25).unwrap();
/// assert_eq!(m.angular_velocity().z, ERA_RATE);
/// ```
pub fn earth_motion_at_ut1(jd_ut1: f64, jd_ut1_fraction: f64) -> Result<FrameMotion<Eci, Ecef>> {
    earth_motion_at_rate(ERA_RATE, 0.0, earth_rotation_angle(jd_ut1, jd_ut1_fraction)?)
}

/// ECEF relative to [`Eci`] `time` seconds after an epoch at angle `angle_at_epoch`, turning at
/// `rate` (rad/s) about the common z axis.
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) naming `time` or `angle_at_epoch`.
#[inline(always)]
pub fn earth_motion_at_rate(rate: f64, time: f64, angle_at_epoch: f64) -> Result<FrameMotion<Eci, Ecef>> {
    ensure_finite1(time, "time")?;
    ensure_finite1(angle_at_epoch, "angle_at_epoch")?;
    FrameMotion::about_axis(Vector3::z(), angle_at_epoch + rate * time, rate, 0.0)
}
