//! Measurement models of aided inertial navigation: the predicted measurement of a navigation
//! solution, its residual against a measured value, and the Jacobian of the prediction with
//! respect to the [`inertial`](super::inertial) error state.
//!
//! # Conventions
//!
//! The error state is *estimate minus truth*, in the mechanization's own coordinates (rows
//! 0–8 position, velocity, attitude ψ; 9–14 the residual accelerometer and gyro biases; 15–20
//! the residual scale factors). A sensor-error state is the error that remains in the
//! *compensated* measurement: `ω̂ = ω + b_g + diag(ω) s_g` (so that `ω̂ − ω` is estimate minus
//! truth). Each model gives
//!
//! * the **residual** `y = z − ẑ` (measured minus predicted), and
//! * the **Jacobian** `H = ∂ẑ/∂δx`, so that `ẑ − z ≈ H δx − v` with `v` the measurement noise.
//!
//! With `C = C_b^ν` the body-to-mechanization rotation (ν is NED or ECEF), `C_ν^n` the
//! mechanization-to-NED rotation (the identity for the NED form), `P` the NED metres per
//! position error (NED form `diag(M + h, (N + h) cos φ, −1)`, ECEF form `C_e^n`), `ω` the
//! compensated angular rate (body), `ω_eb = ω − Cᵀ ω_ie^ν` and `l` a lever arm (body axes):
//!
//! ```text
//! position (NED m)      ẑ = p + C_ν^n C l               H_p = P,  H_ψ = −C_ν^n [(C l)×]
//! velocity (NED m/s)    ẑ = C_ν^n (v + C (ω_eb × l))     H_v = C_ν^n,  H_ψ = C_ν^n (−[(C (ω_eb × l))×] + E),
//!                                                         H_bg = −C_ν^n C [l×],  H_sg = H_bg diag(ω)
//! zero velocity         ẑ = C_ν^n v                      H_v = C_ν^n
//! zero angular rate     ẑ = ω_eb                          H_ψ = −Cᵀ [ω_ie×],  H_bg = I,  H_sg = diag(ω)
//! vehicle velocity      ẑ = C_b^v (Cᵀ v + ω_eb × l)       H_v = C_b^v Cᵀ,  H_ψ = C_b^v Cᵀ ([v×] + E),
//!   (rows y, z: the constraint; row x: odometer)          H_bg = −C_b^v [l×],  H_sg = H_bg diag(ω)
//! height                ẑ = h                             H_p = −(row 3 of P)
//! heading               ẑ = atan2(C^n₂₁, C^n₁₁)           H_ψ = (cos ψ tan θ, sin ψ tan θ, 1) C_ν^n
//! ```
//!
//! with `E = C [l×] Cᵀ [ω_ie×]`, the attitude error acting through the Earth rate in `ω_eb`.
//!
//! The position residual of the NED form is formed from geodetic differences scaled to metres
//! (`(φ_m − φ̂)(M + h)`, `(λ_m − λ̂)(N + h) cos φ`, `−(h_m − ĥ)`), of the ECEF form from the
//! ECEF difference turned into NED; a heading residual is wrapped into (−π, π]. The small
//! terms left out are second order in the errors or of order `Ω |l|` against the noise: the
//! rotation of the NED axes with a position error in the ECEF velocity models, the latitude
//! dependence of the Earth rate in the lever-arm terms (below 1e-10 m/s per metre of error). The heading row is the first row of
//! [`euler_from_quaternion_jacobian`]. (Forms from
//! P. D. Groves, *Principles of GNSS, Inertial, and Multisensor Integrated Navigation
//! Systems*, 2nd ed. (2013), §14.3 and §16.3, rewritten for this crate's error conventions;
//! section numbers from memory.)

use nalgebra::{Matrix3, RowVector3, SMatrix, UnitQuaternion, Vector3};

use crate::earth::geodetic::inverse_unchecked;
use crate::earth::local::{earth_rate_ned_unchecked, radii_unchecked};
use crate::earth::{self, Geodetic};
use crate::error::Result;
use crate::math;
use crate::nav::{MechanizationState, NavFrame, Strapdown};

use super::{euler_from_quaternion_jacobian, skew};

/// The navigation solution as the measurement models see it (see the
/// [module documentation](self) for the symbols).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NavPoint {
    /// Geodetic position.
    pub position: Geodetic,
    /// `C_b^ν`, body to the mechanization's axes.
    pub body_to_nav: Matrix3<f64>,
    /// Velocity relative to the Earth in the mechanization's axes (m/s).
    pub velocity_nav: Vector3<f64>,
    /// `C_ν^n`, the mechanization's axes to NED (the identity for the NED form).
    pub nav_to_ned: Matrix3<f64>,
    /// The Earth rate `ω_ie` in the mechanization's axes (rad/s).
    pub earth_rate_nav: Vector3<f64>,
    /// NED metres per unit of the position error state.
    pub position_to_ned: Matrix3<f64>,
    /// The compensated angular rate `ω_ib^b` (rad/s).
    pub angular_rate: Vector3<f64>,
    /// `C_b^n`, body to NED.
    pub body_to_ned: UnitQuaternion<f64>,
    /// The mechanization.
    pub frame: NavFrame,
    /// The ECEF position (m) for the ECEF form; unused (zero) for the NED form.
    pub position_ecef: Vector3<f64>,
}

impl NavPoint {
    /// The point of a stepper's current state with the compensated angular rate `angular_rate`
    /// (rad/s, body axes).
    ///
    /// ```
    /// use nalgebra::Vector3;
    /// use rotaframe::earth::Geodetic;
    /// use rotaframe::linearise::aiding::NavPoint;
    /// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
    /// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 0.0), Vector3::zeros(), Default::default())).unwrap();
    /// let point = NavPoint::of(&ins, &Vector3::zeros());
    /// assert!((point.position_to_ned[(2, 2)] + 1.0).abs() < 1e-15); // NED: δD = −δh
    /// ```
    #[must_use]
    pub fn of(stepper: &Strapdown, angular_rate: &Vector3<f64>) -> Self {
        let (config, state, _) = stepper.parts();
        let model = &config.earth;
        match state {
            MechanizationState::Ned { position, velocity_ned, attitude } => {
                let (s, c) = math::sin_cos(position.latitude);
                let radii = radii_unchecked(model, s);
                Self {
                    position,
                    body_to_nav: attitude.to_rotation_matrix().into_inner(),
                    velocity_nav: velocity_ned,
                    nav_to_ned: Matrix3::identity(),
                    earth_rate_nav: earth_rate_ned_unchecked(model, s, c),
                    position_to_ned: Matrix3::from_diagonal(&Vector3::new(
                        radii.meridian + position.height,
                        (radii.prime_vertical + position.height) * c,
                        -1.0,
                    )),
                    angular_rate: *angular_rate,
                    body_to_ned: attitude,
                    frame: NavFrame::Ned,
                    position_ecef: Vector3::zeros(),
                }
            }
            MechanizationState::Ecef { position_ecef, velocity_ecef, attitude_ecef } => {
                let position = inverse_unchecked(model, &position_ecef);
                let q_en = earth::ecef_from_ned_quaternion(position.latitude, position.longitude)
                    .unwrap_or_else(|_| UnitQuaternion::identity());
                let nav_to_ned = q_en.inverse().to_rotation_matrix().into_inner();
                Self {
                    position,
                    body_to_nav: attitude_ecef.to_rotation_matrix().into_inner(),
                    velocity_nav: velocity_ecef,
                    nav_to_ned,
                    earth_rate_nav: Vector3::new(0.0, 0.0, model.rotation_rate()),
                    position_to_ned: nav_to_ned,
                    angular_rate: *angular_rate,
                    body_to_ned: q_en.inverse() * attitude_ecef,
                    frame: NavFrame::Ecef,
                    position_ecef,
                }
            }
        }
    }

    /// `ω_eb^b`: the body's angular rate relative to the Earth (rad/s, body axes).
    #[must_use]
    pub fn rate_over_earth(&self) -> Vector3<f64> {
        self.angular_rate - self.body_to_nav.transpose() * self.earth_rate_nav
    }
}

/// A linearised measurement of up to three rows: the rows beyond `rows` are zero.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LinearMeasurement<const N: usize> {
    /// How many rows are used (1 to 3).
    pub rows: usize,
    /// `y = z − ẑ`, measured minus predicted, in the measurement's units.
    pub residual: Vector3<f64>,
    /// `H = ∂ẑ/∂δx`.
    pub jacobian: SMatrix<f64, 3, N>,
}

impl<const N: usize> LinearMeasurement<N> {
    fn new(rows: usize, residual: Vector3<f64>) -> Self {
        Self { rows, residual, jacobian: SMatrix::zeros() }
    }

    fn put(&mut self, column: usize, block: &Matrix3<f64>) {
        self.jacobian.fixed_view_mut::<3, 3>(0, column).copy_from(block);
    }

    /// The gyro bias block and, in the 21-state model, the gyro scale-factor block
    /// `H_bg diag(ω)`.
    fn put_gyro(&mut self, block: &Matrix3<f64>, rate: &Vector3<f64>) {
        self.put(12, block);
        if N == 21 {
            self.put(18, &(block * Matrix3::from_diagonal(rate)));
        }
    }
}

/// A GNSS position fix at an antenna with `lever_arm` (m, body axes); the residual is in NED
/// metres.
///
/// # Errors
/// As [`geodetic_to_ecef`](crate::earth::geodetic_to_ecef) for `measured` (ECEF form).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::aiding::{NavPoint, position_fix};
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let here = Geodetic::from_degrees(45.0, 7.0, 100.0);
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), Default::default())).unwrap();
/// let point = NavPoint::of(&ins, &Vector3::zeros());
/// let fix = Geodetic { height: 103.0, ..here };
/// let m = position_fix::<15>(&point, &ins.config().earth, &fix, &Vector3::zeros()).unwrap();
/// assert!((m.residual.z + 3.0).abs() < 1e-9); // 3 m higher: −3 m down
/// ```
pub fn position_fix<const N: usize>(
    point: &NavPoint,
    model: &earth::EarthModel,
    measured: &Geodetic,
    lever_arm: &Vector3<f64>,
) -> Result<LinearMeasurement<N>> {
    let arm_nav = point.body_to_nav * lever_arm;
    let difference = if point.frame == NavFrame::Ned {
        let d_lon = wrap_angle(measured.longitude - point.position.longitude);
        let scale = point.position_to_ned.diagonal();
        Vector3::new(
            (measured.latitude - point.position.latitude) * scale.x,
            d_lon * scale.y,
            -(measured.height - point.position.height),
        )
    } else {
        point.nav_to_ned * (earth::geodetic_to_ecef(model, measured)? - point.position_ecef)
    };
    let mut m = LinearMeasurement::new(3, difference - point.nav_to_ned * arm_nav);
    m.put(0, &point.position_to_ned);
    #[cfg(feature = "fault-injection")]
    if fault::FLIP_DOWN_SIGN.load(core::sync::atomic::Ordering::Relaxed) {
        for column in 0..3 {
            m.jacobian[(2, column)] = -m.jacobian[(2, column)];
        }
    }
    m.put(6, &(-point.nav_to_ned * skew(&arm_nav)));
    Ok(m)
}

/// A GNSS velocity fix (NED, m/s) at an antenna with `lever_arm` (m, body axes).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::aiding::{NavPoint, velocity_fix};
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 0.0), Vector3::new(10.0, 0.0, 0.0), Default::default())).unwrap();
/// // Yawing at 0.1 rad/s with the antenna 2 m ahead: it moves 0.2 m/s east.
/// let point = NavPoint::of(&ins, &Vector3::new(0.0, 0.0, 0.1));
/// let m = velocity_fix::<15>(&point, &Vector3::new(10.0, 0.2, 0.0), &Vector3::new(2.0, 0.0, 0.0));
/// assert!(m.residual.amax() < 2e-4); // all but the Earth rate's part, about Ω · 2 m
/// ```
#[must_use]
pub fn velocity_fix<const N: usize>(
    point: &NavPoint,
    measured_ned: &Vector3<f64>,
    lever_arm: &Vector3<f64>,
) -> LinearMeasurement<N> {
    let arm_velocity = point.body_to_nav * point.rate_over_earth().cross(lever_arm);
    let predicted = point.nav_to_ned * (point.velocity_nav + arm_velocity);
    let mut m = LinearMeasurement::new(3, measured_ned - predicted);
    m.put(3, &point.nav_to_ned);
    m.put(6, &(point.nav_to_ned * (-skew(&arm_velocity) + earth_rate_through_attitude(point, lever_arm))));
    m.put_gyro(&(-point.nav_to_ned * point.body_to_nav * skew(lever_arm)), &point.angular_rate);
    m
}

/// A zero-velocity update: the vehicle stands still (residual `−v`, NED).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::aiding::{NavPoint, zero_velocity};
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 0.0), Vector3::new(0.1, 0.0, 0.0), Default::default())).unwrap();
/// let m = zero_velocity::<15>(&NavPoint::of(&ins, &Vector3::zeros()));
/// assert_eq!(m.residual.x, -0.1);
/// ```
#[must_use]
pub fn zero_velocity<const N: usize>(point: &NavPoint) -> LinearMeasurement<N> {
    let mut m = LinearMeasurement::new(3, -(point.nav_to_ned * point.velocity_nav));
    m.put(3, &point.nav_to_ned);
    m
}

/// A zero-angular-rate update: the body does not turn relative to the Earth (residual
/// `−ω_eb`, body axes, rad/s).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::earth::{earth_rate_ned, Geodetic, WGS84};
/// use rotaframe::linearise::aiding::{NavPoint, zero_angular_rate};
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let here = Geodetic::from_degrees(45.0, 7.0, 0.0);
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), Default::default())).unwrap();
/// // A level body facing north measures the Earth rate and nothing else.
/// let m = zero_angular_rate::<15>(&NavPoint::of(&ins, &earth_rate_ned(&WGS84, here.latitude).unwrap()));
/// assert!(m.residual.amax() < 1e-18);
/// ```
#[must_use]
pub fn zero_angular_rate<const N: usize>(point: &NavPoint) -> LinearMeasurement<N> {
    let mut m = LinearMeasurement::new(3, -point.rate_over_earth());
    m.put(6, &(-point.body_to_nav.transpose() * skew(&point.earth_rate_nav)));
    m.put_gyro(&Matrix3::identity(), &point.angular_rate);
    m
}

/// `∂(C (ω_eb × l))/∂ψ` through the Earth rate in `ω_eb = ω − Ĉᵀ ω_ie` (the rotation of `C`
/// itself is the caller's term): `C [l×] Cᵀ [ω_ie×]`.
fn earth_rate_through_attitude(point: &NavPoint, lever_arm: &Vector3<f64>) -> Matrix3<f64> {
    let c = &point.body_to_nav;
    c * skew(lever_arm) * c.transpose() * skew(&point.earth_rate_nav)
}

/// The velocity of the point at `lever_arm` (m, body axes) in vehicle axes, given by the
/// body-to-vehicle rotation `mounting`: rows x (forward), y (right), z (down). The land-vehicle
/// constraint uses rows y and z with measured zeros ([`vehicle_constraint`]); an odometer row
/// x ([`odometer`]).
fn vehicle_velocity<const N: usize>(
    point: &NavPoint,
    mounting: &UnitQuaternion<f64>,
    lever_arm: &Vector3<f64>,
) -> (Vector3<f64>, SMatrix<f64, 3, N>) {
    let c_bv = mounting.to_rotation_matrix().into_inner();
    let c_nb = point.body_to_nav.transpose();
    let predicted = c_bv * (c_nb * point.velocity_nav + point.rate_over_earth().cross(lever_arm));
    let mut m = LinearMeasurement::<N>::new(3, Vector3::zeros());
    m.put(3, &(c_bv * c_nb));
    m.put(6, &(c_bv * (c_nb * skew(&point.velocity_nav) + c_nb * earth_rate_through_attitude(point, lever_arm))));
    m.put_gyro(&(-c_bv * skew(lever_arm)), &point.angular_rate);
    (predicted, m.jacobian)
}

/// The land-vehicle constraint: no lateral and no vertical velocity, in vehicle axes, at the
/// point at `lever_arm` (the rear axle's centre, say); two rows.
///
/// ```
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::aiding::{NavPoint, vehicle_constraint};
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 0.0), Vector3::new(10.0, 0.5, 0.0), Default::default())).unwrap();
/// let m = vehicle_constraint::<15>(&NavPoint::of(&ins, &Vector3::zeros()), &UnitQuaternion::identity(), &Vector3::zeros());
/// assert_eq!((m.rows, m.residual.x), (2, -0.5)); // half a metre per second of side slip
/// ```
#[must_use]
pub fn vehicle_constraint<const N: usize>(
    point: &NavPoint,
    mounting: &UnitQuaternion<f64>,
    lever_arm: &Vector3<f64>,
) -> LinearMeasurement<N> {
    let (predicted, h) = vehicle_velocity::<N>(point, mounting, lever_arm);
    let mut m = LinearMeasurement::<N>::new(2, Vector3::new(-predicted.y, -predicted.z, 0.0));
    m.jacobian.row_mut(0).copy_from(&h.row(1));
    m.jacobian.row_mut(1).copy_from(&h.row(2));
    m
}

/// An odometer's forward speed (m/s) at `lever_arm` in vehicle axes; one row.
///
/// ```
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::aiding::{NavPoint, odometer};
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 0.0), Vector3::new(10.0, 0.0, 0.0), Default::default())).unwrap();
/// let m = odometer::<15>(&NavPoint::of(&ins, &Vector3::zeros()), 10.2, &UnitQuaternion::identity(), &Vector3::zeros());
/// assert!((m.residual.x - 0.2).abs() < 1e-12);
/// ```
#[must_use]
pub fn odometer<const N: usize>(
    point: &NavPoint,
    speed: f64,
    mounting: &UnitQuaternion<f64>,
    lever_arm: &Vector3<f64>,
) -> LinearMeasurement<N> {
    let (predicted, h) = vehicle_velocity::<N>(point, mounting, lever_arm);
    let mut m = LinearMeasurement::<N>::new(1, Vector3::new(speed - predicted.x, 0.0, 0.0));
    m.jacobian.row_mut(0).copy_from(&h.row(0));
    m
}

/// An ellipsoidal height (m); one row.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::aiding::{NavPoint, height_fix};
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 50.0), Vector3::zeros(), Default::default())).unwrap();
/// let m = height_fix::<15>(&NavPoint::of(&ins, &Vector3::zeros()), 52.0);
/// assert_eq!((m.residual.x, m.jacobian[(0, 2)]), (2.0, 1.0));
/// ```
#[must_use]
pub fn height_fix<const N: usize>(point: &NavPoint, height: f64) -> LinearMeasurement<N> {
    let mut m = LinearMeasurement::<N>::new(1, Vector3::new(height - point.position.height, 0.0, 0.0));
    let up: RowVector3<f64> = -point.position_to_ned.row(2);
    m.jacobian.fixed_view_mut::<1, 3>(0, 0).copy_from(&up);
    m
}

/// A true heading (rad, clockwise from north); one row, the residual wrapped into (−π, π].
///
/// # Errors
/// [`Error::Invalid`](crate::Error::Invalid) at ±90° pitch, where heading is undefined (as
/// [`euler_from_quaternion_jacobian`]).
///
/// ```
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::aiding::{NavPoint, heading_fix};
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let east = UnitQuaternion::from_axis_angle(&Vector3::z_axis(), 1.5);
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 0.0), Vector3::zeros(), east)).unwrap();
/// let m = heading_fix::<15>(&NavPoint::of(&ins, &Vector3::zeros()), 1.6).unwrap();
/// assert!((m.residual.x - 0.1).abs() < 1e-12);
/// ```
pub fn heading_fix<const N: usize>(point: &NavPoint, heading: f64) -> Result<LinearMeasurement<N>> {
    let (euler, jacobian) = euler_from_quaternion_jacobian(&point.body_to_ned)?;
    let mut m = LinearMeasurement::<N>::new(1, Vector3::new(wrap_angle(heading - euler.yaw), 0.0, 0.0));
    let row: RowVector3<f64> = jacobian.row(0) * point.nav_to_ned;
    m.jacobian.fixed_view_mut::<1, 3>(0, 6).copy_from(&row);
    Ok(m)
}

/// Switches that plant known faults in the models, for tests that show a check catches them
/// (feature `fault-injection`; never in a product).
#[cfg(feature = "fault-injection")]
pub mod fault {
    use core::sync::atomic::AtomicBool;
    /// Flips the sign of the down row of the position fix's position Jacobian (the classic
    /// down-versus-up mistake).
    pub static FLIP_DOWN_SIGN: AtomicBool = AtomicBool::new(false);
}

/// An angle wrapped into (−π, π].
#[must_use]
pub(crate) fn wrap_angle(angle: f64) -> f64 {
    use core::f64::consts::{PI, TAU};
    let wrapped = angle - TAU * math::floor((angle + PI) / TAU);
    if wrapped <= -PI { wrapped + TAU } else { wrapped }
}
