//! The inertial error-state model of rotaframe's strapdown mechanizations, its discrete form,
//! and covariance prediction along a run.
//!
//! # States and conventions
//!
//! Errors are *estimate minus truth*. The state vector (15 numbers, or 21 with scale factors):
//!
//! | rows | NED mechanization | ECEF mechanization |
//! |---|---|---|
//! | 0–2 | `δφ, δλ` (rad), `δh` (m) | `δr^e` (m) |
//! | 3–5 | `δv^n` (m/s, NED) | `δv^e` (m/s, ECEF) |
//! | 6–8 | `ψ^n`: `Ĉ_b^n = (I + [ψ×]) C_b^n` (rad) | `ψ^e`: `Ĉ_b^e = (I + [ψ×]) C_b^e` |
//! | 9–11 | accelerometer bias `b_a` (m/s², body axes) | the same |
//! | 12–14 | gyro bias `b_g` (rad/s, body axes) | the same |
//! | 15–17 | accelerometer scale factors `s_a` (21 states) | the same |
//! | 18–20 | gyro scale factors `s_g` (21 states) | the same |
//!
//! The attitude error is the parent-side small-angle rotation of [`linearise`](super) (the
//! navigation frame's axes). The sensors measure `f̃ = f + b_a + diag(f) s_a + w_a` and
//! `ω̃ = ω + b_g + diag(ω) s_g + w_g` (the [`nav::sensor`](crate::nav) model without
//! misalignment, whose fixed part is deterministic); each bias is a first-order Gauss–Markov
//! process `ḃ = −b/τ + w_b` (a random constant for `τ = ∞`).
//!
//! # Continuous-time model `δẋ = F δx + G w`
//!
//! NED (with `ω_in = ω_ie + ω_en`, `f^n = C_b^n f`, `R_N = M + h`, `R_E = N + h`):
//!
//! ```text
//! δφ̇ = δv_N / R_N − v_N (M′ δφ + δh) / R_N²
//! δλ̇ = δv_E / (R_E cos φ) + v_E (R_E sin φ − N′ cos φ) δφ / (R_E cos φ)² − v_E δh / (R_E² cos φ)
//! δḣ = −δv_D
//! δv̇ = −[f^n×] ψ + [v×] (2 ∂ω_ie/∂p + ∂ω_en/∂p) δp + ∂g/∂p δp − [(2ω_ie + ω_en)×] δv + [v×] ∂ω_en/∂v δv + C_b^n δf
//! ψ̇  = −[ω_in×] ψ − ∂ω_in/∂p δp − ∂ω_en/∂v δv + C_b^n δω
//! ```
//!
//! ECEF: `δṙ = δv`, `δv̇ = ∂g^e/∂r δr − 2 [Ω×] δv − [f^e×] ψ + C_b^e δf`,
//! `ψ̇ = −[Ω×] ψ + C_b^e δω`. The gravity gradients come from the [`linearise`](super)
//! gravity Jacobians of the same gravity model the stepper uses. The aided vertical channel
//! adds `δḣ −= k₁ δh`, `δv̇_D += k₂ δh` (ECEF: along the local up direction); the held channel
//! removes the vertical position and velocity errors (their rows and columns are zero; in
//! ECEF the position and velocity errors are projected on the local horizontal).
//!
//! This follows P. D. Groves, *Principles of GNSS, Inertial, and Multisensor Integrated
//! Navigation Systems*, 2nd ed. (2013), §14.2 (ECEF, eq. 14.48–14.50, and local-navigation
//! frame, eq. 14.63–14.71; equation numbers from memory) and D. H. Titterton and J. L.
//! Weston, *Strapdown Inertial Navigation Technology*, 2nd ed. (2004), ch. 12, with these
//! differences: Groves writes the attitude error as the rotation from true to estimated
//! attitude with the opposite sign for the sensor-error inputs; here every error is estimate
//! minus truth and ψ is the parent-side perturbation used by every Jacobian of rotaframe; the
//! derivatives of the radii of curvature with latitude (`M′`, `N′`) are kept.
//!
//! # Noise
//!
//! `w = (w_a, w_g, w_ba, w_bg)` (12 numbers) with power spectral densities
//! `(N_a², N_g², 2σ_a²/τ_a, 2σ_g²/τ_g)` per axis from the [`ImuErrorModel`]: white noise
//! densities `N` and Gauss–Markov σ, τ (Gelb, *Applied Optimal Estimation*, 1974, ch. 3).
//!
//! # Discrete form over an interval `T`
//!
//! `Φ = exp(F T)` and `Q_d = ∫₀ᵀ exp(F s) G Q Gᵀ exp(F s)ᵀ ds`, both by their Taylor series
//! (`Q_d = Σ Q_k Tᵏ/k!`, `Q₁ = G Q Gᵀ`, `Q_{k+1} = F Q_k + Q_k Fᵀ`), summed until a term is below
//! 1e-16 of the sum (the rounding of its largest entry), after halving `T` until `‖F T‖_∞ ≤ 1/4` and doubling back with
//! `Φ(2t) = Φ(t)²`, `Q(2t) = Φ(t) Q(t) Φ(t)ᵀ + Q(t)` (C. F. Van Loan, "Computing integrals
//! involving the matrix exponential", IEEE Trans. AC-23 (1978), for the integral; scaling and
//! squaring: Moler and Van Loan, SIAM Review 20 (1978)).
//!
//! [`discretise_second_order`] is the truncation that real-time filters use at high rates
//! (Groves §14.2.4 gives the first- and second-order forms, from memory of the section
//! number): `Φ ≈ I + F T + F² T²/2` and `Q_d ≈ Q_c T + (F Q_c + Q_c Fᵀ) T²/2`, the first three
//! terms of the same two series. Each entry's error is below `(‖F T‖∞)³/6` of the largest entry
//! of `Φ`, and `(‖F T‖∞)² T/3` of the largest of `Q_c`, times a factor of order one (the next
//! terms, bounded by the norm); at 100 Hz with a 1 g specific force that is a few parts in 10⁴
//! of the largest entry, and rounding-level for most entries.

use nalgebra::{Matrix3, SMatrix, SVector, UnitQuaternion, Vector3};

use super::{gravity_model_ecef_jacobian, gravity_ned_jacobian, skew};
use crate::earth::{self, Geodetic};
use crate::error::{Error, Result};
use crate::math;
use crate::nav::{ImuErrorModel, ImuIncrement, MechanizationState, NavFrame, Strapdown, StrapdownConfig, VerticalChannel};

/// Calls `body::<N, W>` on rows padded to four lanes for the 15- and 21-state sizes, through
/// their AVX2 twins where the CPU has them, and `body::<N, N>` for other sizes.
macro_rules! padded_call {
    ($twin15:ident, $twin21:ident, $body:ident, ($($arg:expr),*)) => {
        match N {
            15 => crate::fast_call!($twin15, $body::<15, 16>, ($($arg),*)),
            21 => crate::fast_call!($twin21, $body::<21, 24>, ($($arg),*)),
            _ => $body::<N, N>($($arg),*),
        }
    };
}

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
/// [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole); [`Error::NonFinite`] naming
/// `specific_force` or `angular_rate`.
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
    crate::error::ensure_finite3(specific_force, "specific_force")?;
    crate::error::ensure_finite3(angular_rate, "angular_rate")?;
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

/// `Φ = exp(F T)` and `Q_d = ∫₀ᵀ exp(F s) G diag(psd) Gᵀ exp(F s)ᵀ ds` over `interval` (s); see
/// the [module documentation](self).
///
/// # Errors
/// [`Error::NotPositive`] or [`Error::OutOfRange`] naming `interval` (positive, at most
/// [`MAX_INTERVAL`](crate::limits::MAX_INTERVAL)); [`Error::NonFinite`] naming `f`, `g` or
/// `psd`; [`Error::Invalid`] naming `psd` for a negative density.
///
/// ```
/// use nalgebra::{SMatrix, SVector};
/// use rotaframe::linearise::inertial::discretise;
/// // A random walk x' = w of density q: Φ = 1, Q_d = q T.
/// let f = SMatrix::<f64, 1, 1>::zeros();
/// let g = SMatrix::<f64, 1, 1>::identity();
/// let (phi, qd) = discretise(&f, &g, &SVector::<f64, 1>::new(2.0), 0.5).unwrap();
/// assert_eq!((phi[(0, 0)], qd[(0, 0)]), (1.0, 1.0));
/// ```
#[inline]
pub fn discretise<const N: usize, const M: usize>(
    f: &SMatrix<f64, N, N>,
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
    interval: f64,
) -> Result<(SMatrix<f64, N, N>, SMatrix<f64, N, N>)> {
    check_discretisation(f, g, psd, interval)?;
    let (mut phi, mut q) = (SMatrix::<f64, N, N>::zeros(), SMatrix::<f64, N, N>::zeros());
    padded_call!(
        exact_15_fast,
        exact_21_fast,
        exact_from_noise_input,
        (f.as_slice(), g.as_slice(), psd.as_slice(), interval, phi.as_mut_slice(), q.as_mut_slice())
    );
    Ok((phi, q))
}

/// [`discretise`] truncated at second order: `Φ = I + F T + F² T²/2`,
/// `Q_d = Q_c T + (F Q_c + Q_c Fᵀ) T²/2` (see the [module documentation](self) for the error
/// bound): two sparse products instead of the full series, for filters that rebuild `Φ` and
/// `Q_d` at every IMU step.
///
/// # Errors
/// As [`discretise`].
///
/// ```
/// use nalgebra::{SMatrix, SVector};
/// use rotaframe::linearise::inertial::{discretise, discretise_second_order};
/// // x'' = w (a double integrator): Φ and Q_d are exactly second order in T for Φ.
/// let f = SMatrix::<f64, 2, 2>::new(0.0, 1.0, 0.0, 0.0);
/// let g = SMatrix::<f64, 2, 1>::new(0.0, 1.0);
/// let psd = SVector::<f64, 1>::new(1.0);
/// let (phi, qd) = discretise_second_order(&f, &g, &psd, 0.1).unwrap();
/// let (phi_exact, qd_exact) = discretise(&f, &g, &psd, 0.1).unwrap();
/// assert_eq!(phi, phi_exact);
/// assert_eq!(qd[(1, 1)], qd_exact[(1, 1)]); // q T; the position entries miss q T³/3
/// assert!((qd[(0, 0)] - qd_exact[(0, 0)]).abs() <= 0.1f64.powi(3) / 3.0 + 1e-18);
/// ```
#[inline]
pub fn discretise_second_order<const N: usize, const M: usize>(
    f: &SMatrix<f64, N, N>,
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
    interval: f64,
) -> Result<(SMatrix<f64, N, N>, SMatrix<f64, N, N>)> {
    check_discretisation(f, g, psd, interval)?;
    let (mut phi, mut q) = (SMatrix::<f64, N, N>::zeros(), SMatrix::<f64, N, N>::zeros());
    padded_call!(
        second_order_15_fast,
        second_order_21_fast,
        second_order_body,
        (f.as_slice(), g.as_slice(), psd.as_slice(), interval, phi.as_mut_slice(), q.as_mut_slice())
    );
    Ok((phi, q))
}

crate::fast_twin!(fn second_order_15_fast(f: &[f64], g: &[f64], psd: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = second_order_body::<15, 16>);
crate::fast_twin!(fn second_order_21_fast(f: &[f64], g: &[f64], psd: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = second_order_body::<21, 24>);

/// The second-order truncation, from `F` (column-major) and the noise input `G` (column-major)
/// with its densities, into `phi` (column-major) and `q` (symmetric), column by column:
///
/// * column `j` of `Φ` is `e_j + T F[:, j] + (T²/2) Σ_k F[k, j] F[:, k]`, one vectorised update
///   per non-zero entry of column `j` (`F`'s columns are its contiguous storage);
/// * `Q_d = B + Bᵀ` with `B = Σ_m q_m g_m w_mᵀ`, `w_m = F g_m T²/2 + g_m T/2` for the columns
///   `g_m` of `G` (at most three non-zero entries each): `B = Q_c Fᵀ T²/2 + Q_c T/2`, so that
///   `Q_c` and its products are never formed.
#[inline(always)]
fn second_order_body<const N: usize, const W: usize>(
    f: &[f64],
    g: &[f64],
    psd: &[f64],
    t: f64,
    phi_out: &mut [f64],
    q_out: &mut [f64],
) {
    let columns = Rows::<N, W>::from_rows_of(f);
    let half_t2 = 0.5 * t * t;
    for (j, out) in phi_out.chunks_exact_mut(N).enumerate() {
        let column = &columns.0[j];
        let sum = columns.combine(&column[..N], half_t2);
        for ((o, &s), &c) in out.iter_mut().zip(&sum).zip(column) {
            *o = s + c * t;
        }
        out[j] += 1.0;
    }
    let mut b = Rows::<N, W>::zeros();
    for (g_column, &density) in g.chunks_exact(N).zip(psd) {
        if density == 0.0 {
            continue;
        }
        let mut w = columns.combine(g_column, half_t2);
        for (x, &gi) in w.iter_mut().zip(g_column) {
            *x += gi * (0.5 * t);
        }
        for (row, &gj) in b.0.iter_mut().zip(g_column) {
            if gj != 0.0 {
                let weight = density * gj;
                for (r, &x) in row.iter_mut().zip(&w) {
                    *r += weight * x;
                }
            }
        }
    }
    let mut q = Rows::<N, W>::zeros();
    symmetric_sum(&b, &mut q);
    q.write_symmetric(q_out);
}

/// The checks of [`discretise`]: the interval, finite `F`, `G`, densities, none negative.
fn check_discretisation<const N: usize, const M: usize>(
    f: &SMatrix<f64, N, N>,
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
    interval: f64,
) -> Result<()> {
    ImuIncrement::new(Vector3::zeros(), Vector3::zeros(), interval).validate()?;
    crate::error::ensure_finite(f.as_slice(), "f")?;
    crate::error::ensure_finite(g.as_slice(), "g")?;
    crate::error::ensure_finite(psd.as_slice(), "psd")?;
    if psd.iter().any(|&q| q < 0.0) {
        return Err(Error::Invalid { quantity: "psd", reason: "spectral densities must be non-negative" });
    }
    Ok(())
}

/// As [`discretise`] with the continuous noise covariance `Q_c = G Q Gᵀ` given (not checked;
/// used through its lower triangle, as a symmetric matrix).
///
/// The 15- and 21-state sizes run on rows padded to a multiple of four lanes, and with an
/// AVX2 twin where the CPU has it (the same bits; see [`dispatch`](crate::dispatch)).
#[must_use]
pub fn discretise_covariance<const N: usize>(
    f: &SMatrix<f64, N, N>,
    qc: &SMatrix<f64, N, N>,
    interval: f64,
) -> (SMatrix<f64, N, N>, SMatrix<f64, N, N>) {
    let (mut phi, mut q) = (SMatrix::<f64, N, N>::zeros(), SMatrix::<f64, N, N>::zeros());
    padded_call!(
        exact_qc_15_fast,
        exact_qc_21_fast,
        exact_from_covariance,
        (f.as_slice(), qc.as_slice(), interval, phi.as_mut_slice(), q.as_mut_slice())
    );
    (phi, q)
}

crate::fast_twin!(fn exact_15_fast(f: &[f64], g: &[f64], psd: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = exact_from_noise_input::<15, 16>);
crate::fast_twin!(fn exact_21_fast(f: &[f64], g: &[f64], psd: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = exact_from_noise_input::<21, 24>);
crate::fast_twin!(fn exact_qc_15_fast(f: &[f64], qc: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = exact_from_covariance::<15, 16>);
crate::fast_twin!(fn exact_qc_21_fast(f: &[f64], qc: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = exact_from_covariance::<21, 24>);

#[inline(always)]
fn exact_from_noise_input<const N: usize, const W: usize>(
    f: &[f64],
    g: &[f64],
    psd: &[f64],
    interval: f64,
    phi: &mut [f64],
    q: &mut [f64],
) {
    discretise_body::<N, W>(f, &noise_rows::<N, W>(g, psd), interval, phi, q);
}

#[inline(always)]
fn exact_from_covariance<const N: usize, const W: usize>(f: &[f64], qc: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) {
    // The lower triangle, mirrored: the series keeps every term exactly symmetric.
    let mut rows = Rows::<N, W>::zeros();
    for (j, column) in qc.chunks_exact(N).enumerate() {
        for (i, &x) in column.iter().enumerate().skip(j) {
            rows.0[i][j] = x;
            rows.0[j][i] = x;
        }
    }
    discretise_body::<N, W>(f, &rows, interval, phi, q);
}

/// The discretisation on rows padded to `W ≥ N` entries (the padding stays zero), from `F`
/// (column-major, `N²` values) and `Q_c` into `phi` (column-major) and `q` (symmetric): slices,
/// so that no layer copies the matrices.
#[inline(always)]
fn discretise_body<const N: usize, const W: usize>(
    f: &[f64],
    qc: &Rows<N, W>,
    interval: f64,
    phi_out: &mut [f64],
    q_out: &mut [f64],
) {
    let pattern = RowPattern::<N>::of(f);
    // Halve until ‖F t‖∞ ≤ 1/4 (at most 60 halvings: F is finite).
    let norm = pattern.norm_inf();
    let mut halvings = 0;
    let mut t = interval;
    while norm * t > 0.25 && halvings < 60 {
        t *= 0.5;
        halvings += 1;
    }
    let mut phi = Rows::<N, W>::zeros();
    let mut q = Rows::<N, W>::zeros();
    taylor::<N, W>(&pattern, qc, t, &mut phi, &mut q);
    phi.write_transposed(phi_out);
    q.write_symmetric(q_out);
    if halvings > 0 {
        let mut p = SMatrix::<f64, N, N>::from_column_slice(phi_out);
        let mut qm = SMatrix::<f64, N, N>::from_column_slice(q_out);
        for _ in 0..halvings {
            qm = p * qm * p.transpose() + qm;
            p *= p;
        }
        symmetrise(&mut qm);
        phi_out.copy_from_slice(p.as_slice());
        q_out.copy_from_slice(qm.as_slice());
    }
}

/// A square matrix stored by rows: `W ≥ N` rows of `W` entries, of which the leading `N × N`
/// block is used and the rest stays zero, so that row updates run in whole vector lanes and
/// transposes in 4 × 4 blocks.
#[derive(Clone, Copy)]
#[repr(C, align(32))]
struct Rows<const N: usize, const W: usize>([[f64; W]; W]);

impl<const N: usize, const W: usize> Rows<N, W> {
    #[inline(always)]
    fn zeros() -> Self {
        Self([[0.0; W]; W])
    }
    #[inline(always)]
    fn identity() -> Self {
        let mut m = Self::zeros();
        m.add_identity();
        m
    }
    #[inline(always)]
    fn add_identity(&mut self) {
        for i in 0..N {
            self.0[i][i] += 1.0;
        }
    }
    /// From `N²` values in column-major order, scaled.
    #[inline(always)]
    fn from_columns(m: &[f64], scale: f64) -> Self {
        let mut out = Self::zeros();
        for (j, column) in m.chunks_exact(N).enumerate() {
            for (i, &x) in column.iter().enumerate() {
                out.0[i][j] = x * scale;
            }
        }
        out
    }
    /// The rows of this matrix are the `N` contiguous groups of `N` values of `m` (the
    /// columns of a column-major matrix), padded.
    #[inline(always)]
    fn from_rows_of(m: &[f64]) -> Self {
        let mut out = Self::zeros();
        for (row, group) in out.0.iter_mut().zip(m.chunks_exact(N)) {
            row[..N].copy_from_slice(group);
        }
        out
    }
    /// With `self` holding a matrix `A` by columns (row `k` is column `k` of `A`): the column
    /// `A x scale` for the column `x`, one vectorised update per non-zero entry of `x`.
    #[inline(always)]
    fn combine(&self, x: &[f64], scale: f64) -> [f64; W] {
        let mut out = [0.0f64; W];
        for (&xk, column) in x.iter().zip(&self.0) {
            if xk != 0.0 {
                let weight = xk * scale;
                for (o, &c) in out.iter_mut().zip(column) {
                    *o += weight * c;
                }
            }
        }
        out
    }
    #[inline(always)]
    fn matrix(&self) -> SMatrix<f64, N, N> {
        SMatrix::from_fn(|i, j| self.0[i][j])
    }
    #[inline(always)]
    fn scale(&mut self, factor: f64) {
        for row in &mut self.0 {
            for x in row.iter_mut() {
                *x *= factor;
            }
        }
    }
    #[inline(always)]
    fn add_assign(&mut self, other: &Self) {
        for (a, b) in self.0.iter_mut().zip(&other.0) {
            for (x, y) in a.iter_mut().zip(b) {
                *x += y;
            }
        }
    }
    /// The largest magnitude of an entry.
    #[inline(always)]
    fn largest(&self) -> f64 {
        let mut m = [0.0f64; W];
        for row in &self.0 {
            for (m, &x) in m.iter_mut().zip(row) {
                let a = x.abs();
                *m = if a > *m { a } else { *m };
            }
        }
        m.iter().fold(0.0, |a, &b| if b > a { b } else { a })
    }
    /// Writes the `N × N` block in column-major order (its transpose by rows, in blocks).
    #[inline(always)]
    fn write_transposed(&self, out: &mut [f64]) {
        let mut transposed = Self::zeros();
        transpose_blocks(self, &mut transposed, false);
        for (column, row) in out.chunks_exact_mut(N).zip(&transposed.0) {
            column.copy_from_slice(&row[..N]);
        }
    }
    /// Writes the `N × N` block of a symmetric matrix (its rows are its columns).
    #[inline(always)]
    fn write_symmetric(&self, out: &mut [f64]) {
        for (column, row) in out.chunks_exact_mut(N).zip(&self.0) {
            column.copy_from_slice(&row[..N]);
        }
    }
}

/// `out = a + aᵀ` (exactly symmetric: entries `(i, j)` and `(j, i)` are the same sum).
#[inline(always)]
fn symmetric_sum<const N: usize, const W: usize>(a: &Rows<N, W>, out: &mut Rows<N, W>) {
    transpose_blocks(a, out, true);
}

/// `out = aᵀ`, or `a + aᵀ` with `add`, by 4 × 4 blocks when `W` is a multiple of four (each
/// block read as four row vectors and rearranged in registers), else entry by entry.
#[inline(always)]
fn transpose_blocks<const N: usize, const W: usize>(a: &Rows<N, W>, out: &mut Rows<N, W>, add: bool) {
    if !W.is_multiple_of(4) {
        for i in 0..W {
            for j in 0..W {
                out.0[i][j] = if add { a.0[i][j] + a.0[j][i] } else { a.0[j][i] };
            }
        }
        return;
    }
    for bi in (0..W).step_by(4) {
        for bj in (0..=bi).step_by(4) {
            // Blocks (bi, bj) and (bj, bi) of the result from blocks (bj, bi) and (bi, bj).
            let (lower, upper) = (block4(a, bi, bj), block4(a, bj, bi));
            let (mut new_lower, mut new_upper) = (transpose4(&upper), transpose4(&lower));
            if add {
                for r in 0..4 {
                    for c in 0..4 {
                        new_lower[r][c] += lower[r][c];
                    }
                }
                new_upper = transpose4(&new_lower);
            }
            for r in 0..4 {
                out.0[bi + r][bj..bj + 4].copy_from_slice(&new_lower[r]);
                out.0[bj + r][bi..bi + 4].copy_from_slice(&new_upper[r]);
            }
        }
    }
}

/// The 4 × 4 block of `a` at (`row`, `column`), as four row vectors. (Functions, not
/// closures, so that they are inlined into each CPU path; see `dispatch`.)
#[inline(always)]
fn block4<const N: usize, const W: usize>(a: &Rows<N, W>, row: usize, column: usize) -> [[f64; 4]; 4] {
    core::array::from_fn(|r| {
        let lanes = &a.0[row + r][column..column + 4];
        [lanes[0], lanes[1], lanes[2], lanes[3]]
    })
}

#[inline(always)]
fn transpose4(m: &[[f64; 4]; 4]) -> [[f64; 4]; 4] {
    [
        [m[0][0], m[1][0], m[2][0], m[3][0]],
        [m[0][1], m[1][1], m[2][1], m[3][1]],
        [m[0][2], m[1][2], m[2][2], m[3][2]],
        [m[0][3], m[1][3], m[2][3], m[3][3]],
    ]
}

/// The Taylor series of `Φ` and `Q_d` over a short interval.
///
/// Every product of the series has `F` on the left, and `F` is sparse (an INS model has about
/// 70 non-zero entries of 225): row `i` of `F X` is the sum over the non-zero `F[i, k]` of
/// `F[i, k]` times row `k` of `X`, one vectorised row update per non-zero entry.
#[inline(always)]
fn taylor<const N: usize, const W: usize>(
    pattern: &RowPattern<N>,
    qc: &Rows<N, W>,
    t: f64,
    phi: &mut Rows<N, W>,
    q: &mut Rows<N, W>,
) {
    // Φ = Σ (F T)ᵏ/k!: term ← F term T/k, in two buffers used in turn.
    *phi = Rows::<N, W>::identity();
    let mut terms = [Rows::<N, W>::identity(), Rows::<N, W>::zeros()];
    // The stopping test compares with the sum after the first term (Φ's entries are within a
    // factor of two of it for ‖F T‖ ≤ 1/4), so each term costs one scan of itself.
    let mut threshold = 0.0;
    for k in 1..30 {
        let [even, odd] = &mut terms;
        let (last, term) = if k % 2 == 1 { (&*even, odd) } else { (&*odd, even) };
        left_product(pattern, last, t / f64::from(k), term);
        phi.add_assign(term);
        if k == 1 {
            threshold = 1e-16 * phi.largest();
        }
        if term.largest() <= threshold {
            break;
        }
    }
    // Q_{k+1} = F Q_k + Q_k Fᵀ = S + Sᵀ with S = F Q_k (Q_k symmetric).
    let mut q_term = *qc;
    q_term.scale(t);
    *q = q_term;
    let product = &mut terms[0];
    let mut threshold = 1e-16 * q_term.largest();
    for k in 2..30 {
        left_product(pattern, &q_term, t / f64::from(k), product);
        symmetric_sum(product, &mut q_term);
        q.add_assign(&q_term);
        if k == 2 {
            threshold = threshold.max(1e-16 * q.largest());
        }
        if q_term.largest() <= threshold {
            break;
        }
    }
}

/// The columns and values of each row's non-zero entries.
struct RowPattern<const N: usize> {
    count: [usize; N],
    columns: [[u8; N]; N],
    values: [[f64; N]; N],
}

impl<const N: usize> RowPattern<N> {
    /// The pattern of a matrix given column-major (`N²` values; `N` below 256).
    #[inline(always)]
    fn of(a: &[f64]) -> Self {
        let mut pattern = Self { count: [0; N], columns: [[0; N]; N], values: [[0.0; N]; N] };
        for (k, column) in a.chunks_exact(N).enumerate() {
            for (i, &x) in column.iter().enumerate() {
                let c = pattern.count[i];
                pattern.columns[i][c] = k as u8;
                pattern.values[i][c] = x;
                pattern.count[i] += usize::from(x != 0.0);
            }
        }
        pattern
    }
    /// The largest row sum of magnitudes (the ∞-norm).
    #[inline(always)]
    fn norm_inf(&self) -> f64 {
        let mut norm = 0.0f64;
        for (values, &count) in self.values.iter().zip(&self.count) {
            let sum = values[..count].iter().fold(0.0, |s, x| s + x.abs());
            norm = if sum > norm { sum } else { norm };
        }
        norm
    }
}

/// `out = scale A X` for `A` with the given pattern (its non-zero entries); rows `N..W` of
/// `out` are left as they are (zero).
#[inline(always)]
fn left_product<const N: usize, const W: usize>(pattern: &RowPattern<N>, x: &Rows<N, W>, scale: f64, out: &mut Rows<N, W>) {
    for i in 0..N {
        // The row is summed in a local array (held in registers), then stored once.
        let mut row = [0.0f64; W];
        let count = pattern.count[i];
        for (&k, &value) in pattern.columns[i][..count].iter().zip(&pattern.values[i][..count]) {
            let factor = value * scale;
            for (r, v) in row.iter_mut().zip(&x.0[usize::from(k)]) {
                *r += factor * v;
            }
        }
        out.0[i] = row;
    }
}

/// Calls `add(i, j, value)` for the entries of `G diag(psd) Gᵀ` (`G` column-major, `N` rows),
/// a sum of outer products over the non-zero entries of each column of `G` (an INS model's
/// columns have at most three). Each off-diagonal value is given for `(i, j)` and `(j, i)`
/// alike, so that the sum is exactly symmetric.
#[inline(always)]
fn noise_entries<const N: usize>(g: &[f64], psd: &[f64], mut add: impl FnMut(usize, usize, f64)) {
    for (column, &density) in g.chunks_exact(N).zip(psd) {
        if density == 0.0 {
            continue;
        }
        let mut rows = [0usize; N];
        let mut count = 0;
        for (i, &x) in column.iter().enumerate() {
            rows[count] = i;
            count += usize::from(x != 0.0);
        }
        for (a, &i) in rows[..count].iter().enumerate() {
            let scaled = density * column[i];
            for &j in &rows[a..count] {
                let value = scaled * column[j];
                add(i, j, value);
                if i != j {
                    add(j, i, value);
                }
            }
        }
    }
}

/// `G diag(psd) Gᵀ` by padded rows.
#[inline(always)]
fn noise_rows<const N: usize, const W: usize>(g: &[f64], psd: &[f64]) -> Rows<N, W> {
    let mut qc = Rows::<N, W>::zeros();
    noise_entries::<N>(g, psd, |i, j, v| qc.0[i][j] += v);
    qc
}

/// `G diag(psd) Gᵀ`.
fn noise_covariance<const N: usize, const M: usize>(g: &SMatrix<f64, N, M>, psd: &SVector<f64, M>) -> SMatrix<f64, N, N> {
    let mut qc = SMatrix::<f64, N, N>::zeros();
    noise_entries::<N>(g.as_slice(), psd.as_slice(), |i, j, v| qc[(i, j)] += v);
    qc
}

/// `Φ P Φᵀ + Q_d` over `interval` (s) for the model `F` with continuous noise covariance
/// `Q_c`, without forming `Φ` or `Q_d`: the exact solution of the covariance equation
/// `Ṗ = F P + P Fᵀ + Q_c` from `P` by its Taylor series, `P(T) = Σ Y_k Tᵏ/k!` with `Y₀ = P`,
/// `Y₁ = F P + P Fᵀ + Q_c`, `Y_{k+1} = F Y_k + Y_k Fᵀ` (one sparse product per term, where
/// `Φ P Φᵀ + Q_d` costs the series of both and two more products). Summed until every entry
/// of a term is below 1e-16 of its own scale (`|P_ij| + √(P_ii P_jj)`), so that small
/// variances (a latitude's, in rad²) keep their relative precision beside large ones. For a
/// long interval (`‖F T‖∞ > 1/4`) it is `Φ P Φᵀ + Q_d` from [`discretise_covariance`].
///
/// ```
/// use nalgebra::SMatrix;
/// use rotaframe::linearise::inertial::propagate_covariance;
/// // A random walk x' = w of density 2: P grows by 2 T.
/// let f = SMatrix::<f64, 1, 1>::zeros();
/// let p = propagate_covariance(&f, &SMatrix::<f64, 1, 1>::new(2.0), &SMatrix::<f64, 1, 1>::new(1.0), 0.5);
/// assert_eq!(p[(0, 0)], 2.0);
/// ```
#[must_use]
pub fn propagate_covariance<const N: usize>(
    f: &SMatrix<f64, N, N>,
    qc: &SMatrix<f64, N, N>,
    p: &SMatrix<f64, N, N>,
    interval: f64,
) -> SMatrix<f64, N, N> {
    let norm = (0..N).map(|i| f.row(i).iter().map(|x| x.abs()).sum::<f64>()).fold(0.0, f64::max);
    if norm * interval > 0.25 {
        let (phi, qd) = discretise_covariance(f, qc, interval);
        let mut out = phi * p * phi.transpose() + qd;
        symmetrise(&mut out);
        return out;
    }
    macro_rules! sized {
        ($n:literal, $w:literal, $twin:ident) => {
            if N == $n {
                let f = SMatrix::<f64, $n, $n>::from_column_slice(f.as_slice());
                let qc = SMatrix::<f64, $n, $n>::from_column_slice(qc.as_slice());
                let p = SMatrix::<f64, $n, $n>::from_column_slice(p.as_slice());
                let out = crate::fast_call!($twin, lyapunov_series::<$n, $w>, (&f, &qc, &p, interval));
                return SMatrix::from_column_slice(out.as_slice());
            }
        };
    }
    sized!(15, 16, lyapunov_15_fast);
    sized!(21, 24, lyapunov_21_fast);
    lyapunov_series::<N, N>(f, qc, p, interval)
}

type Square<const N: usize> = SMatrix<f64, N, N>;
crate::fast_twin!(fn lyapunov_15_fast(f: &Square<15>, qc: &Square<15>, p: &Square<15>, t: f64) -> Square<15> = lyapunov_series::<15, 16>);
crate::fast_twin!(fn lyapunov_21_fast(f: &Square<21>, qc: &Square<21>, p: &Square<21>, t: f64) -> Square<21> = lyapunov_series::<21, 24>);

#[inline(always)]
fn lyapunov_series<const N: usize, const W: usize>(f: &Square<N>, qc: &Square<N>, p: &Square<N>, t: f64) -> Square<N> {
    let pattern = RowPattern::<N>::of(f.as_slice());
    let mut sum = Rows::<N, W>::from_columns(p.as_slice(), 1.0);
    let mut term = sum;
    let mut product = Rows::<N, W>::zeros();
    for k in 1..40 {
        let scale = t / f64::from(k);
        left_product(&pattern, &term, scale, &mut product);
        let mut scales = [0.0f64; W];
        for (i, s) in scales.iter_mut().enumerate().take(N) {
            *s = crate::math::sqrt(sum.0[i][i].abs());
        }
        // The term (the product plus its transpose), then one vectorised pass that adds it
        // and finds the largest excess of an entry over its tolerance.
        symmetric_sum(&product, &mut term);
        if k == 1 {
            for i in 0..N {
                for j in 0..N {
                    term.0[i][j] += qc[(i, j)] * t;
                }
            }
        }
        let mut excess = [f64::NEG_INFINITY; W];
        for i in 0..N {
            let (row, total, d) = (&term.0[i], &mut sum.0[i], scales[i]);
            for j in 0..W {
                total[j] += row[j];
                let over = row[j].abs() - 1e-16 * (total[j].abs() + d * scales[j]);
                excess[j] = if over > excess[j] { over } else { excess[j] };
            }
        }
        let converged = excess.iter().all(|&e| e <= 0.0);
        if converged {
            break;
        }
    }
    let mut out = sum.matrix();
    symmetrise(&mut out);
    out
}

fn symmetrise<const N: usize>(p: &mut SMatrix<f64, N, N>) {
    for i in 0..N {
        for j in 0..i {
            let m = 0.5 * (p[(i, j)] + p[(j, i)]);
            p[(i, j)] = m;
            p[(j, i)] = m;
        }
    }
}

/// Predicts the error covariance of a strapdown run: starting from `stepper` (its state is
/// the start of the run) with covariance `p0`, for each increment builds `F`, `G` at the state
/// at the start of the interval with the increment's specific force and rate, propagates
/// `P ← Φ P Φᵀ + Q_d` over the interval with the noise of `model` (see
/// [`propagate_covariance`]), steps the stepper,
/// and hands `(index, stepper, P)` to `sink` after every step. `height_reference` is as in
/// [`Strapdown::run`] (element `k` is the height reference set before step `k`), so that the
/// linearisation follows the same path as the run it predicts.
///
/// # Errors
/// [`BatchError`](crate::BatchError)-style: the first failing step's index with its error
/// (as [`Strapdown::step`], [`error_model`], [`discretise`]); [`Error::NonFinite`] naming `p0`;
/// [`Error::LengthMismatch`] naming `height_reference` unless it has one element per
/// increment.
///
/// ```
/// use nalgebra::{SMatrix, Vector3};
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::inertial::predict_covariance;
/// use rotaframe::nav::{ImuErrorModel, ImuIncrement, NavState, SensorErrorModel, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 200.0), Vector3::zeros(), Default::default())).unwrap();
/// let gyro = SensorErrorModel { noise_density: Vector3::repeat(1e-5), ..Default::default() };
/// let model = ImuErrorModel { gyro, ..Default::default() };
/// let still = vec![ImuIncrement::new(Vector3::zeros(), Vector3::new(0.0, 0.0, -0.098), 0.01); 100];
/// let mut last = SMatrix::<f64, 15, 15>::zeros();
/// predict_covariance::<15>(&ins, &still, None, &model, &SMatrix::zeros(), |_, _, p| last = *p).unwrap();
/// // One second of angle random walk: attitude variance N_g² t about each axis.
/// assert!((last[(6, 6)] / 1e-10 - 1.0).abs() < 1e-6);
/// ```
pub fn predict_covariance<const N: usize>(
    stepper: &Strapdown,
    increments: &[ImuIncrement],
    height_reference: Option<&[f64]>,
    model: &ImuErrorModel,
    p0: &SMatrix<f64, N, N>,
    mut sink: impl FnMut(usize, &Strapdown, &SMatrix<f64, N, N>),
) -> core::result::Result<(), crate::BatchError> {
    crate::error::ensure_finite(p0.as_slice(), "p0").map_err(|error| crate::BatchError { index: 0, error })?;
    if let Some(h) = height_reference
        && h.len() != increments.len()
    {
        return Err(crate::BatchError {
            index: 0,
            error: Error::LengthMismatch { quantity: "height_reference", found: h.len(), expected: increments.len() },
        });
    }
    let psd = noise_psd(model);
    let times = (&model.accelerometer.markov_time, &model.gyro.markov_time);
    let mut ins = *stepper;
    let mut p = *p0;
    for (index, increment) in increments.iter().enumerate() {
        let at = |error| crate::BatchError { index, error };
        increment.validate().map_err(at)?;
        if let Some(&h) = height_reference.and_then(|h| h.get(index)) {
            ins.set_height_reference(h).map_err(at)?;
        }
        let t = increment.interval;
        let (_, state, _) = ins.parts();
        let (f, g) = error_model::<N>(ins.config(), &state, &(increment.delta_velocity / t), &(increment.delta_angle / t), times)
            .map_err(at)?;
        let qc = noise_covariance(&g, &psd);
        p = propagate_covariance(&f, &qc, &p, t);
        symmetrise(&mut p);
        ins.step(increment).map_err(at)?;
        sink(index, &ins, &p);
    }
    Ok(())
}
