//! The continuous-time error-state model `δẋ = F δx + G w` and its noise densities (formulas:
//! the [module documentation](super)).

use nalgebra::{Matrix3, SMatrix, SVector, UnitQuaternion, Vector3};

use crate::earth::{self, Geodetic};
use crate::error::{Error, Result};
use crate::linearise::{gravity_model_ecef_jacobian, gravity_ned_jacobian, skew};
use crate::math;
use crate::nav::{ImuErrorModel, MechanizationState, NavFrame, StrapdownConfig, VerticalChannel};

/// The number of noise inputs: accelerometer and gyro white noise, accelerometer and gyro
/// bias drives.
pub const NOISE_INPUTS: usize = 12;

/// The noise input matrix `G` of an `N`-state model.
pub type NoiseInput<const N: usize> = SMatrix<f64, N, NOISE_INPUTS>;

/// The noise power spectral densities of an [`ImuErrorModel`], in the order of the noise
/// inputs: `N_a²` (m²/s³), `N_g²` (rad²/s), `2σ_a²/τ_a` (m²/s⁵), `2σ_g²/τ_g` (rad²/s³); a
/// random-constant bias (`τ = ∞`) has no drive.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::linearise::inertial::noise_psd;
/// use rotaframe::nav::{ImuErrorModel, SensorErrorModel};
/// let gyro = SensorErrorModel { markov_sigma: Vector3::repeat(1e-5), markov_time: Vector3::repeat(100.0), ..Default::default() };
/// let q = noise_psd(&ImuErrorModel { gyro, ..Default::default() });
/// assert!((q[9] - 2e-12).abs() < 1e-27);
/// ```
#[must_use]
pub fn noise_psd(model: &ImuErrorModel) -> SVector<f64, NOISE_INPUTS> {
    let mut q = SVector::<f64, NOISE_INPUTS>::zeros();
    for i in 0..3 {
        q[i] = model.accelerometer.noise_density[i] * model.accelerometer.noise_density[i];
        q[3 + i] = model.gyro.noise_density[i] * model.gyro.noise_density[i];
        q[6 + i] = drive(model.accelerometer.markov_sigma[i], model.accelerometer.markov_time[i]);
        q[9 + i] = drive(model.gyro.markov_sigma[i], model.gyro.markov_time[i]);
    }
    q
}

fn drive(sigma: f64, tau: f64) -> f64 {
    if tau.is_finite() { 2.0 * sigma * sigma / tau } else { 0.0 }
}

/// The initial covariance of the bias states implied by an [`ImuErrorModel`]: the
/// Gauss–Markov steady-state variance `σ²` on the diagonal of the bias blocks (rows 9–14),
/// zero elsewhere (add the navigation and scale-factor uncertainties yourself).
#[must_use]
pub fn bias_covariance<const N: usize>(model: &ImuErrorModel) -> SMatrix<f64, N, N> {
    let mut p = SMatrix::<f64, N, N>::zeros();
    for i in 0..3 {
        p[(9 + i, 9 + i)] = model.accelerometer.markov_sigma[i] * model.accelerometer.markov_sigma[i];
        p[(12 + i, 12 + i)] = model.gyro.markov_sigma[i] * model.gyro.markov_sigma[i];
    }
    p
}

/// The continuous-time system matrix `F` and noise input matrix `G` of the `N`-state error
/// model (`N` = 15, or 21 with scale factors) of a stepper with `config`, at `state`, with the
/// current specific force and angular rate (body axes, m/s² and rad/s: the measured values,
/// `Δv/T` and `Δθ/T` of the step); `bias_time` gives the Gauss–Markov correlation times of
/// the accelerometer and gyro biases (s; infinity for random constants).
///
/// # Errors
/// [`Error::Invalid`] naming `states` unless `N` is 15 or 21; as the gravity Jacobians
/// ([`Error::NearPole`] in the NED form within
/// [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole); [`Error::NonFinite`] or
/// [`Error::BeyondLimit`] naming `specific_force` (at most
/// [`MAX_ACCELERATION`](crate::limits::MAX_ACCELERATION)) or `angular_rate` (at most
/// [`MAX_ANGULAR_VELOCITY`](crate::limits::MAX_ANGULAR_VELOCITY)).
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::inertial::error_model;
/// use rotaframe::nav::{NavState, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 200.0), Vector3::new(20.0, 0.0, 0.0), Default::default())).unwrap();
/// let (_, state, _) = ins.parts();
/// let tau = Vector3::repeat(f64::INFINITY); // random-constant biases
/// let (f, g) = error_model::<15>(ins.config(), &state, &Vector3::new(0.0, 0.0, -9.8), &Vector3::zeros(), (&tau, &tau)).unwrap();
/// // A level body (f^n = (0, 0, -g)): the north velocity error grows as -g times the tilt about east.
/// assert!((f[(3, 7)] + 9.8).abs() < 1e-12);
/// assert_eq!(g.ncols(), 12);
/// ```
#[inline]
pub fn error_model<const N: usize>(
    config: &StrapdownConfig,
    state: &MechanizationState,
    specific_force: &Vector3<f64>,
    angular_rate: &Vector3<f64>,
    bias_time: (&Vector3<f64>, &Vector3<f64>),
) -> Result<(SMatrix<f64, N, N>, NoiseInput<N>)> {
    if N != 15 && N != 21 {
        return Err(Error::Invalid { quantity: "states", reason: "the error model has 15 or 21 states" });
    }
    // The ranges of an IMU sample (`ImuSample::validate`): beyond them the products in F
    // overflow or lose all meaning.
    crate::limits::check_vector(specific_force, crate::limits::MAX_ACCELERATION, "m/s²", "specific_force")?;
    crate::limits::check_vector(angular_rate, crate::limits::MAX_ANGULAR_VELOCITY, "rad/s", "angular_rate")?;
    let mut f = SMatrix::<f64, N, N>::zeros();
    let mut g = NoiseInput::<N>::zeros();
    let (c_b, up) = match state {
        MechanizationState::Ned { position, velocity_ned, attitude } => {
            ned_blocks(config, position, velocity_ned, &mut f)?;
            (rotation(attitude), None)
        }
        MechanizationState::Ecef { position_ecef, velocity_ecef: _, attitude_ecef } => {
            let up = ecef_blocks(config, position_ecef, &mut f)?;
            (rotation(attitude_ecef), up)
        }
    };
    // The specific force and the sensor inputs, the same in both forms.
    let f_nav = c_b * specific_force;
    put(&mut f, 3, 6, &(-skew(&f_nav)));
    put(&mut f, 3, 9, &c_b);
    put(&mut f, 6, 12, &c_b);
    if N == 21 {
        put(&mut f, 3, 15, &(c_b * Matrix3::from_diagonal(specific_force)));
        put(&mut f, 6, 18, &(c_b * Matrix3::from_diagonal(angular_rate)));
    }
    let (accelerometer_time, gyro_time) = bias_time;
    for i in 0..3 {
        f[(9 + i, 9 + i)] = decay(accelerometer_time[i]);
        f[(12 + i, 12 + i)] = decay(gyro_time[i]);
    }
    g.fixed_view_mut::<3, 3>(3, 0).copy_from(&c_b);
    g.fixed_view_mut::<3, 3>(6, 3).copy_from(&c_b);
    g.fixed_view_mut::<3, 3>(9, 6).copy_from(&Matrix3::identity());
    g.fixed_view_mut::<3, 3>(12, 9).copy_from(&Matrix3::identity());
    apply_vertical_channel(config, up.as_ref(), &mut f, &mut g);
    Ok((f, g))
}

fn decay(tau: f64) -> f64 {
    if tau.is_finite() { -1.0 / tau } else { 0.0 }
}

fn rotation(q: &UnitQuaternion<f64>) -> Matrix3<f64> {
    q.to_rotation_matrix().into_inner()
}

fn put<const N: usize>(f: &mut SMatrix<f64, N, N>, row: usize, col: usize, block: &Matrix3<f64>) {
    f.fixed_view_mut::<3, 3>(row, col).copy_from(block);
}

/// The position, velocity and attitude blocks of the NED form.
fn ned_blocks<const N: usize>(
    config: &StrapdownConfig,
    p: &Geodetic,
    v: &Vector3<f64>,
    f: &mut SMatrix<f64, N, N>,
) -> Result<()> {
    let model = &config.earth;
    earth::local::check_away_from_pole(p.latitude, "latitude")?;
    let (s, c) = math::sin_cos(p.latitude);
    let radii = earth::local::radii_unchecked(model, s);
    let e2 = model.eccentricity_squared();
    let w2 = 1.0 - e2 * s * s;
    let (m, n) = (radii.meridian, radii.prime_vertical);
    let (dm, dn) = (3.0 * m * e2 * s * c / w2, n * e2 * s * c / w2);
    let (rn, re) = (m + p.height, n + p.height);
    let tan = s / c;
    let omega = model.rotation_rate();
    // Position rows.
    f[(0, 0)] = -v.x * dm / (rn * rn);
    f[(0, 2)] = -v.x / (rn * rn);
    f[(0, 3)] = 1.0 / rn;
    f[(1, 0)] = v.y * (re * s - dn * c) / (re * re * c * c);
    f[(1, 2)] = -v.y / (re * re * c);
    f[(1, 4)] = 1.0 / (re * c);
    f[(2, 5)] = -1.0;
    // Earth and transport rates and their derivatives (columns φ, λ, h of the position).
    let w_ie = Vector3::new(omega * c, 0.0, -omega * s);
    let w_en = Vector3::new(v.y / re, -v.x / rn, -v.y * tan / re);
    let mut d_ie = Matrix3::zeros();
    d_ie.set_column(0, &Vector3::new(-omega * s, 0.0, -omega * c));
    let mut d_en = Matrix3::zeros();
    d_en.set_column(
        0,
        &Vector3::new(-v.y * dn / (re * re), v.x * dm / (rn * rn), -v.y * (1.0 / (c * c * re) - tan * dn / (re * re))),
    );
    d_en.set_column(2, &Vector3::new(-v.y / (re * re), v.x / (rn * rn), v.y * tan / (re * re)));
    let en_by_v = Matrix3::new(0.0, 1.0 / re, 0.0, -1.0 / rn, 0.0, 0.0, 0.0, -tan / re, 0.0);
    let (_, dg) = gravity_ned_jacobian(model, config.gravity, p)?;
    let sv = skew(v);
    put(f, 3, 0, &(sv * (2.0 * d_ie + d_en) + dg));
    put(f, 3, 3, &(-skew(&(2.0 * w_ie + w_en)) + sv * en_by_v));
    put(f, 6, 0, &(-(d_ie + d_en)));
    put(f, 6, 3, &(-en_by_v));
    put(f, 6, 6, &(-skew(&(w_ie + w_en))));
    Ok(())
}

/// The position, velocity and attitude blocks of the ECEF form; the local up direction when
/// the vertical channel needs it.
fn ecef_blocks<const N: usize>(
    config: &StrapdownConfig,
    r: &Vector3<f64>,
    f: &mut SMatrix<f64, N, N>,
) -> Result<Option<Vector3<f64>>> {
    let model = &config.earth;
    let omega = skew(&Vector3::new(0.0, 0.0, model.rotation_rate()));
    let (_, dg) = gravity_model_ecef_jacobian(model, config.gravity, r)?;
    put(f, 0, 3, &Matrix3::identity());
    put(f, 3, 0, &dg);
    put(f, 3, 3, &(-2.0 * omega));
    put(f, 6, 6, &(-omega));
    Ok(match config.vertical {
        VerticalChannel::Free => None,
        _ => {
            let p = earth::ecef_to_geodetic(model, r)?;
            let (s, c) = math::sin_cos(p.latitude);
            let (so, co) = math::sin_cos(p.longitude);
            Some(Vector3::new(c * co, c * so, s))
        }
    })
}

/// The vertical channel's changes to `F` and `G`.
fn apply_vertical_channel<const N: usize>(
    config: &StrapdownConfig,
    up: Option<&Vector3<f64>>,
    f: &mut SMatrix<f64, N, N>,
    g: &mut NoiseInput<N>,
) {
    match (config.vertical, config.frame) {
        (VerticalChannel::Free, _) => {}
        (VerticalChannel::Aided { time_constant }, NavFrame::Ned) => {
            let (k1, k2) = (2.0 / time_constant, 1.0 / (time_constant * time_constant));
            f[(2, 2)] -= k1;
            f[(5, 2)] += k2;
        }
        (VerticalChannel::Hold, NavFrame::Ned) => {
            for row in [2, 5] {
                f.row_mut(row).fill(0.0);
                g.row_mut(row).fill(0.0);
                f.column_mut(row).fill(0.0);
            }
        }
        (VerticalChannel::Aided { time_constant }, NavFrame::Ecef) => {
            let (k1, k2) = (2.0 / time_constant, 1.0 / (time_constant * time_constant));
            let u = up.copied().unwrap_or_else(Vector3::z);
            let uu = u * u.transpose();
            let rr = f.fixed_view::<3, 3>(0, 0).into_owned() - k1 * uu;
            let vr = f.fixed_view::<3, 3>(3, 0).into_owned() - k2 * uu;
            put(f, 0, 0, &rr);
            put(f, 3, 0, &vr);
        }
        (VerticalChannel::Hold, NavFrame::Ecef) => {
            let u = up.copied().unwrap_or_else(Vector3::z);
            let horizontal = Matrix3::identity() - u * u.transpose();
            // Rows and columns of the position and velocity errors on the local horizontal.
            for block in [0, 3] {
                let rows = horizontal * f.fixed_view::<3, N>(block, 0);
                f.fixed_view_mut::<3, N>(block, 0).copy_from(&rows);
                let noise = horizontal * g.fixed_view::<3, NOISE_INPUTS>(block, 0);
                g.fixed_view_mut::<3, NOISE_INPUTS>(block, 0).copy_from(&noise);
            }
            for block in [0, 3] {
                let cols = f.fixed_view::<N, 3>(0, block) * horizontal;
                f.fixed_view_mut::<N, 3>(0, block).copy_from(&cols);
            }
        }
    }
}
