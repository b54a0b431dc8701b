//! Analytic test trajectories for the navigation tests, built on the frame machinery.
//!
//! [`Manoeuvres`] is invented test data: a vehicle weaving, climbing, speeding up and slowing
//! down over a fixed local tangent plane, with its attitude oscillating on three axes at
//! periods from half a second to a minute and a half. Every derivative comes from closed-form
//! expressions composed through [`FrameMotion::then`], so the ideal IMU output is exact to
//! rounding and any error a mechanization shows is its own.

use core::f64::consts::TAU;

use rotaframe::earth::{EarthModel, Geodetic, earth_motion, ecef_from_ned_quaternion, ecef_to_geodetic, local_level_motion};
use rotaframe::frames::{Body, Ecef, Eci};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::NavState;

rotaframe::frame!(
    /// A local tangent plane fixed to the Earth, with north-east-down axes at its origin.
    pub Tangent
);
rotaframe::frame!(
    /// The vehicle's reference point, axes parallel to [`Tangent`].
    pub Carried
);
rotaframe::frame!(
    /// After the yaw rotation.
    pub Yawed
);
rotaframe::frame!(
    /// After the pitch rotation.
    pub Pitched
);

/// One sinusoid `amplitude · sin(2π t / period + phase)` with its derivatives.
#[derive(Debug, Clone, Copy)]
struct Wave {
    amplitude: f64,
    period: f64,
    phase: f64,
}

impl Wave {
    const fn new(amplitude: f64, period: f64, phase: f64) -> Self {
        Self { amplitude, period, phase }
    }
    /// Value, first and second derivative at `t`.
    fn at(&self, t: f64) -> [f64; 3] {
        let w = TAU / self.period;
        let (s, c) = (w * t + self.phase).sin_cos();
        [self.amplitude * s, self.amplitude * w * c, -self.amplitude * w * w * s]
    }
}

fn sum(waves: &[Wave], t: f64) -> [f64; 3] {
    waves.iter().fold([0.0; 3], |acc, w| {
        let v = w.at(t);
        [acc[0] + v[0], acc[1] + v[1], acc[2] + v[2]]
    })
}

/// The manoeuvring trajectory; see the [module documentation](self).
#[derive(Debug, Clone, Copy)]
pub struct Manoeuvres {
    /// The Earth model.
    pub model: EarthModel,
    /// Origin of the tangent plane and start of the track.
    pub origin: Geodetic,
    /// Earth rotation angle at t = 0 (rad).
    pub angle_at_epoch: f64,
    /// A fixed shift of the whole track in the tangent plane (north, east, down; m).
    pub offset: Vector3<f64>,
}

const NORTH: [Wave; 2] = [Wave::new(400.0, 150.0, 0.0), Wave::new(35.0, 19.0, 0.4)];
const NORTH_SPEED: f64 = 60.0;
const EAST: [Wave; 3] =
    [Wave::new(-1500.0, 240.0, core::f64::consts::FRAC_PI_2), Wave::new(200.0, 47.0, 0.0), Wave::new(6.0, 4.3, 1.0)];
const DOWN: [Wave; 2] = [Wave::new(-300.0, 200.0, 0.0), Wave::new(-20.0, 31.0, 2.0)];
const YAW: [Wave; 2] = [Wave::new(0.8, 90.0, 0.0), Wave::new(0.05, 7.0, 0.3)];
const YAW_RATE: f64 = 0.01;
const PITCH: [Wave; 2] = [Wave::new(0.15, 37.0, 0.5), Wave::new(0.01, 1.7, 0.0)];
const ROLL: [Wave; 3] = [Wave::new(0.5, 23.0, 0.0), Wave::new(0.05, 3.1, 1.2), Wave::new(0.02, 0.5, 0.0)];

impl Manoeuvres {
    /// The trajectory over the Po valley (45.2° N, 9.6° E, 350 m) on WGS 84.
    #[must_use]
    pub fn standard(model: EarthModel) -> Self {
        Self { model, origin: Geodetic::from_degrees(45.2, 9.6, 350.0), angle_at_epoch: 0.7, offset: Vector3::zeros() }
    }

    /// The body's motion relative to ECEF at time `t` (s).
    ///
    /// # Errors
    /// Only for non-finite `t`.
    pub fn relative_to_earth(&self, t: f64) -> rotaframe::Result<FrameMotion<Ecef, Body>> {
        let tangent = local_level_motion(&self.model, &self.origin, &Vector3::zeros(), &Vector3::zeros())?
            .erase_frames()
            .assume_frames::<Ecef, Tangent>();
        let [n, vn, an] = sum(&NORTH, t);
        let [e, ve, ae] = sum(&EAST, t);
        let [d, vd, ad] = sum(&DOWN, t);
        let carried = FrameMotion::<Tangent, Carried>::from_parts(MotionParts {
            position: Vector3::new(n + NORTH_SPEED * t, e + 1500.0, d) + self.offset,
            velocity: Vector3::new(vn + NORTH_SPEED, ve, vd),
            acceleration: Vector3::new(an, ae, ad),
            ..MotionParts::default()
        })?;
        let [y, yr, ya] = sum(&YAW, t);
        let [p, pr, pa] = sum(&PITCH, t);
        let [r, rr, ra] = sum(&ROLL, t);
        let yaw = FrameMotion::<Carried, Yawed>::about_axis(Vector3::z(), 0.2 + y + YAW_RATE * t, yr + YAW_RATE, ya)?;
        let pitch = FrameMotion::<Yawed, Pitched>::about_axis(Vector3::y(), p, pr, pa)?;
        let roll = FrameMotion::<Pitched, Body>::about_axis(Vector3::x(), r, rr, ra)?;
        Ok(tangent.then(&carried).then(&yaw).then(&pitch).then(&roll))
    }

    /// The body's motion relative to the inertial frame at time `t` (s).
    ///
    /// # Errors
    /// Only for non-finite `t`.
    pub fn relative_to_inertial(&self, t: f64) -> rotaframe::Result<FrameMotion<Eci, Body>> {
        Ok(earth_motion(&self.model, t, self.angle_at_epoch)?.then(&self.relative_to_earth(t)?))
    }

    /// The true navigation state at time `t`.
    ///
    /// # Errors
    /// Only for non-finite `t`.
    pub fn truth(&self, t: f64) -> rotaframe::Result<NavState> {
        state_of(&self.model, &self.relative_to_earth(t)?)
    }
}

/// The navigation state (geodetic position, NED velocity, body-to-NED attitude) of a body
/// whose motion relative to ECEF is `body`.
///
/// # Errors
/// As [`ecef_to_geodetic`].
pub fn state_of(model: &EarthModel, body: &FrameMotion<Ecef, Body>) -> rotaframe::Result<NavState> {
    let position = ecef_to_geodetic(model, &body.position())?;
    let q_ne: UnitQuaternion<f64> = ecef_from_ned_quaternion(position.latitude, position.longitude)?.inverse();
    Ok(NavState::new(position, q_ne * body.velocity(), q_ne * body.rotation()))
}

/// Errors of an estimated state against the truth: position (m, ECEF distance), velocity
/// (m/s), attitude (rad, angle of the error rotation).
#[must_use]
pub fn state_errors(model: &EarthModel, estimate: &NavState, truth: &NavState) -> (f64, f64, f64) {
    let to_ecef =
        |s: &NavState| rotaframe::earth::geodetic_to_ecef(model, &s.position).unwrap_or_else(|_| Vector3::repeat(f64::NAN));
    let position = (to_ecef(estimate) - to_ecef(truth)).norm();
    let velocity = (estimate.velocity_ned - truth.velocity_ned).norm();
    let attitude = (estimate.attitude.inverse() * truth.attitude).angle();
    (position, velocity, attitude)
}
