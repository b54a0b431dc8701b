//! The multi-position and rate-table calibrations (see the [module documentation](super)).

use nalgebra::{Matrix3, SVector, UnitQuaternion, Vector3};

use super::lsq::SequentialQr;
use super::{CalibrationSite, ParameterSet, TriadCalibration, TriadParameters, misalignment_index};
use crate::error::{Error, Result, ensure_finite};
use crate::limits::{self, MAX_ACCELERATION, MAX_ANGULAR_VELOCITY};
use crate::math;

/// One position of a multi-position accelerometer test: the body-to-NED attitude (scalar
/// first, Hamilton) and the mean specific force measured there, in body axes (m/s²).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AccelerometerPosition {
    /// Body-to-NED rotation at the position.
    pub attitude: UnitQuaternion<f64>,
    /// Mean accelerometer output (m/s², body axes).
    pub specific_force: Vector3<f64>,
}

/// One record of a gyro test: a static position (`table_rate` zero) or a run on a rate table
/// turning at `table_rate` (rad/s, right-handed) about `table_axis_ned` (a direction fixed
/// relative to the Earth, resolved in NED; any length but zero) for `duration` (s), with the
/// body-to-NED attitude at the start of the record and the mean gyro output over it (rad/s,
/// body axes: the sum of the angle increments over the duration).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GyroRecord {
    /// Body-to-NED rotation at the start of the record.
    pub attitude: UnitQuaternion<f64>,
    /// The table's spin axis, resolved in NED (ignored when `table_rate` is zero).
    pub table_axis_ned: Vector3<f64>,
    /// The table's rate about its axis (rad/s).
    pub table_rate: f64,
    /// The length of the record (s; ignored when `table_rate` is zero).
    pub duration: f64,
    /// Mean gyro output over the record (rad/s, body axes).
    pub angular_rate: Vector3<f64>,
}

impl GyroRecord {
    /// A static position.
    #[must_use]
    pub fn stationary(attitude: UnitQuaternion<f64>, angular_rate: Vector3<f64>) -> Self {
        Self { attitude, table_axis_ned: Vector3::z(), table_rate: 0.0, duration: 0.0, angular_rate }
    }

    /// The true mean angular rate of the body relative to inertial space over the record,
    /// in body axes (rad/s): the table's rate plus the mean of the Earth's rate (see the
    /// [module documentation](super)).
    ///
    /// # Errors
    /// [`Error::NonFinite`] naming `attitude`, `table_axis_ned`, `table_rate` or
    /// `duration`; [`Error::ZeroNorm`] naming `table_axis_ned`; [`Error::NotPositive`] naming
    /// `duration` of a turning table; [`Error::BeyondLimit`] naming `table_rate`
    /// (beyond [`MAX_ANGULAR_VELOCITY`]) or `duration` (beyond [`MAX_TIME`](limits::MAX_TIME)); as
    /// [`CalibrationSite::earth_rate_ned`].
    ///
    /// ```
    /// use nalgebra::{UnitQuaternion, Vector3};
    /// use rotaframe::calibrate::{CalibrationSite, GyroRecord};
    /// let site = CalibrationSite::new(0.8, 200.0);
    /// // A level table turning at 1 rad/s about down, for exactly ten turns: the horizontal
    /// // Earth rate averages out, the vertical part stays.
    /// let run = GyroRecord { attitude: UnitQuaternion::identity(), table_axis_ned: Vector3::z(), table_rate: 1.0,
    ///                        duration: 20.0 * std::f64::consts::PI, angular_rate: Vector3::zeros() };
    /// let w = run.reference_rate(&site).unwrap();
    /// let earth = site.earth_rate_ned().unwrap();
    /// assert!((w - Vector3::new(0.0, 0.0, 1.0 + earth.z)).norm() < 1e-18);
    /// ```
    pub fn reference_rate(&self, site: &CalibrationSite) -> Result<Vector3<f64>> {
        ensure_finite(self.attitude.as_vector().as_slice(), "attitude")?;
        let earth_rate = site.earth_rate_ned()?;
        if self.table_rate == 0.0 {
            return Ok(self.attitude.inverse_transform_vector(&earth_rate));
        }
        limits::check_scalar(self.table_rate, MAX_ANGULAR_VELOCITY, "rad/s", "table_rate")?;
        limits::check_scalar(self.duration, limits::MAX_TIME, "s", "duration")?;
        if self.duration <= 0.0 {
            return Err(Error::NotPositive { quantity: "duration", value: self.duration });
        }
        ensure_finite(self.table_axis_ned.as_slice(), "table_axis_ned")?;
        let length = self.table_axis_ned.norm();
        if length.is_nan() || length <= 0.0 || length.is_infinite() {
            return Err(Error::ZeroNorm { quantity: "table_axis_ned" });
        }
        let axis = self.table_axis_ned / length;
        let (mean_cos, mean_sin) = mean_cos_sin(self.table_rate * self.duration);
        // R̄ᵀ Ω = (sin Θ/Θ) Ω − ((1 − cos Θ)/Θ) a × Ω + (1 − sin Θ/Θ) a (a · Ω).
        let mean_earth =
            mean_cos * earth_rate - mean_sin * axis.cross(&earth_rate) + (1.0 - mean_cos) * axis * axis.dot(&earth_rate);
        Ok(self.attitude.inverse_transform_vector(&(self.table_rate * axis + mean_earth)))
    }
}

/// `(sin Θ/Θ, (1 − cos Θ)/Θ)`, the means of `cos` and `sin` over `[0, Θ]` (1 and 0 at zero;
/// `1 − cos Θ` as `2 sin²(Θ/2)`, free of cancellation).
fn mean_cos_sin(angle: f64) -> (f64, f64) {
    if angle == 0.0 {
        return (1.0, 0.0);
    }
    let half = math::sin(0.5 * angle);
    (math::sin(angle) / angle, 2.0 * half * half / angle)
}

/// Calibrates an accelerometer triad from static positions with known attitudes (see the
/// [module documentation](super)); `noise` is the standard deviation of a position's mean
/// specific force per axis (m/s²; `None`: estimated from the residuals); the residuals
/// (measured minus model, m/s², three per position: x, y, z) go to `residuals` when given
/// (length three times the number of positions). Positions are given as an iterator
/// (`positions.iter().copied()` for a slice), read twice.
///
/// # Errors
/// [`Error::Invalid`] naming `attitude` for fewer positions than parameters per axis (plus one
/// without `noise`); [`Error::Unobservable`] naming `attitude` with the parameters the
/// positions cannot determine; [`Error::NonFinite`] or [`Error::BeyondLimit`] naming
/// `attitude`, `specific_force` or `noise`; [`Error::LengthMismatch`] naming `residuals`; as
/// [`CalibrationSite::specific_force_ned`].
///
/// ```
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::calibrate::{calibrate_accelerometers, AccelerometerPosition, CalibrationSite, TriadParameters};
/// let site = CalibrationSite::new(0.84, 250.0);
/// let up = site.specific_force_ned().unwrap();
/// // Six positions, each axis up and down, read by a triad with a 0.01 m/s² x bias.
/// let positions: Vec<_> = [(0.0, 0.0), (180.0, 0.0), (90.0, 0.0), (-90.0, 0.0), (0.0, 90.0), (0.0, -90.0)]
///     .iter()
///     .map(|&(roll, pitch): &(f64, f64)| {
///         let attitude = UnitQuaternion::from_euler_angles(roll.to_radians(), pitch.to_radians(), 0.0);
///         let truth = attitude.inverse_transform_vector(&up);
///         AccelerometerPosition { attitude, specific_force: truth + Vector3::new(0.01, 0.0, 0.0) }
///     })
///     .collect();
/// let cal = calibrate_accelerometers(&site, positions.iter().copied(), TriadParameters::Full, Some(&Vector3::repeat(1e-4)), None).unwrap();
/// assert!((cal.bias.x - 0.01).abs() < 1e-12 && cal.scale_factor.norm() < 1e-12);
/// ```
pub fn calibrate_accelerometers<I>(
    site: &CalibrationSite,
    positions: I,
    estimate: TriadParameters,
    noise: Option<&Vector3<f64>>,
    residuals: Option<&mut [f64]>,
) -> Result<TriadCalibration>
where
    I: IntoIterator<Item = AccelerometerPosition>,
    I::IntoIter: Clone + ExactSizeIterator,
{
    let positions = positions.into_iter();
    let up = site.specific_force_ned()?;
    for p in positions.clone() {
        ensure_finite(p.attitude.as_vector().as_slice(), "attitude")?;
        limits::check_vector(&p.specific_force, MAX_ACCELERATION, "m/s²", "specific_force")?;
    }
    let count = positions.len();
    let pairs = positions.map(move |p| (p.attitude.inverse_transform_vector(&up), p.specific_force));
    fit_linear_triad(pairs, count, estimate, noise, residuals, "attitude")
}

/// Calibrates a gyro triad from static positions and rate-table runs (see [`GyroRecord`] and
/// the [module documentation](super)): the same least squares as
/// [`calibrate_accelerometers`] with the reference rates of the records. Static positions
/// alone determine only the biases (use [`TriadParameters::Bias`]); runs about three
/// independent axes, both ways, determine scale factors and misalignments as well.
///
/// # Errors
/// As [`calibrate_accelerometers`] (naming `attitude`, `angular_rate`), and as
/// [`GyroRecord::reference_rate`].
///
/// ```
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::calibrate::{calibrate_gyros, CalibrationSite, GyroRecord, TriadParameters};
/// let site = CalibrationSite::new(0.84, 250.0);
/// // Four static headings; the gyros read 1e-5 rad/s too much on z.
/// let records: Vec<_> = [0.0, 90.0, 180.0, 270.0_f64]
///     .iter()
///     .map(|yaw| {
///         let attitude = UnitQuaternion::from_euler_angles(0.0, 0.0, yaw.to_radians());
///         let mut r = GyroRecord::stationary(attitude, Vector3::zeros());
///         r.angular_rate = r.reference_rate(&site).unwrap() + Vector3::new(0.0, 0.0, 1e-5);
///         r
///     })
///     .collect();
/// let cal = calibrate_gyros(&site, records, TriadParameters::Bias, None, None).unwrap();
/// assert!((cal.bias - Vector3::new(0.0, 0.0, 1e-5)).norm() < 1e-18);
/// ```
pub fn calibrate_gyros<I>(
    site: &CalibrationSite,
    records: I,
    estimate: TriadParameters,
    noise: Option<&Vector3<f64>>,
    residuals: Option<&mut [f64]>,
) -> Result<TriadCalibration>
where
    I: IntoIterator<Item = GyroRecord>,
    I::IntoIter: Clone + ExactSizeIterator,
{
    let records = records.into_iter();
    for r in records.clone() {
        limits::check_vector(&r.angular_rate, MAX_ANGULAR_VELOCITY, "rad/s", "angular_rate")?;
        r.reference_rate(site)?;
    }
    let count = records.len();
    // Every record was checked above, so the references below cannot fail.
    let site = *site;
    let pairs = records.map(move |r| (r.reference_rate(&site).unwrap_or_default(), r.angular_rate));
    fit_linear_triad(pairs, count, estimate, noise, residuals, "attitude")
}

/// The columns of an axis's design `[1, x_x, x_y, x_z]` that `P` parameters use, and the
/// parameters they estimate.
fn axis_columns<const P: usize>(axis: usize) -> ([usize; P], [usize; P]) {
    let mut design = [0usize; P];
    let mut parameter = [0usize; P];
    let mut n = 0;
    for column in 0..4 {
        let index = match column {
            0 => axis,
            c if c - 1 == axis => 3 + axis,
            c => misalignment_index(axis, c - 1),
        };
        let wanted = match P {
            1 => column == 0,
            2 => column == 0 || column - 1 == axis,
            _ => true,
        };
        if wanted && n < P {
            design[n] = column;
            parameter[n] = index;
            n += 1;
        }
    }
    (design, parameter)
}

/// The per-axis linear fit of `x̃ − x = b + K x` over `(reference x, measured x̃)` pairs.
fn fit_linear_triad<I>(
    pairs: I,
    count: usize,
    estimate: TriadParameters,
    noise: Option<&Vector3<f64>>,
    residuals: Option<&mut [f64]>,
    quantity: &'static str,
) -> Result<TriadCalibration>
where
    I: Iterator<Item = (Vector3<f64>, Vector3<f64>)> + Clone,
{
    match estimate {
        TriadParameters::Full => fit_axes::<4, I>(pairs, count, noise, residuals, quantity),
        TriadParameters::BiasAndScale => fit_axes::<2, I>(pairs, count, noise, residuals, quantity),
        TriadParameters::Bias => fit_axes::<1, I>(pairs, count, noise, residuals, quantity),
    }
}

fn fit_axes<const P: usize, I>(
    pairs: I,
    count: usize,
    noise: Option<&Vector3<f64>>,
    residuals: Option<&mut [f64]>,
    quantity: &'static str,
) -> Result<TriadCalibration>
where
    I: Iterator<Item = (Vector3<f64>, Vector3<f64>)> + Clone,
{
    if let Some(sigma) = noise {
        check_noise(sigma)?;
    }
    let needed = P + usize::from(noise.is_none());
    if count < needed {
        return Err(Error::Invalid {
            quantity,
            reason: "too few positions: at least one per parameter estimated on each axis, and one more when the noise is estimated from the residuals",
        });
    }
    if let Some(r) = &residuals
        && r.len() != 3 * count
    {
        return Err(Error::LengthMismatch { quantity: "residuals", found: r.len(), expected: 3 * count });
    }
    let row = |design: &[usize; P], x: &Vector3<f64>| {
        SVector::<f64, P>::from_fn(|c, _| if design[c] == 0 { 1.0 } else { x[design[c] - 1] })
    };
    let mut qrs = [SequentialQr::<P>::new(); 3];
    let mut reference_squares = 0.0;
    for (x, measured) in pairs.clone() {
        reference_squares += x.norm_squared();
        for (axis, qr) in qrs.iter_mut().enumerate() {
            let (design, _) = axis_columns::<P>(axis);
            qr.add_row(&row(&design, &x), measured[axis] - x[axis]);
        }
    }
    let mut unobservable = 0u16;
    let mut condition = 1.0f64;
    // Column scales: √N for the bias column, the references' RMS magnitude times √N for the
    // others, so that an axis the references never load shows as a zero column.
    let count_root = math::sqrt(count as f64);
    let reference_scale = math::sqrt(reference_squares);
    for (axis, qr) in qrs.iter().enumerate() {
        let (design, parameter) = axis_columns::<P>(axis);
        let scales: [f64; P] = core::array::from_fn(|c| if design[c] == 0 { count_root } else { reference_scale });
        let rank = qr.rank_scaled(&scales);
        for (c, &index) in parameter.iter().enumerate() {
            if rank.unobservable & (1 << c) != 0 {
                unobservable |= 1 << index;
            }
        }
        condition = condition.max(rank.condition_number);
    }
    if unobservable != 0 {
        return Err(Error::Unobservable {
            quantity,
            parameters: ParameterSet(unobservable),
            reason: "the reference vectors of the positions do not span three dimensions; add positions with other axes up (or runs about other axes)",
        });
    }
    let mut out = TriadCalibration::perfect();
    out.estimated = ParameterSet(0);
    out.condition_number = condition;
    out.degrees_of_freedom = count - P;
    let mut thetas = [SVector::<f64, P>::zeros(); 3];
    for (axis, qr) in qrs.iter().enumerate() {
        let (theta, unscaled) = qr.solve();
        thetas[axis] = theta;
        let rss = qr.residual_sum_of_squares();
        let sigma = match noise {
            Some(n) => n[axis],
            None => math::sqrt(rss / (qr.rows() - P) as f64),
        };
        out.noise[axis] = sigma;
        out.residual_rms[axis] = math::sqrt(rss / qr.rows() as f64);
        let (_, parameter) = axis_columns::<P>(axis);
        for (c, &index) in parameter.iter().enumerate() {
            out.estimated.0 |= 1 << index;
            set_parameter(&mut out, index, theta[c]);
            for (d, &other) in parameter.iter().enumerate() {
                out.covariance[(index, other)] = sigma * sigma * unscaled[(c, d)];
            }
        }
    }
    if let Some(r) = residuals {
        for ((x, measured), slot) in pairs.zip(r.chunks_exact_mut(3)) {
            for (axis, theta) in thetas.iter().enumerate() {
                let (design, _) = axis_columns::<P>(axis);
                slot[axis] = measured[axis] - x[axis] - row(&design, &x).dot(theta);
            }
        }
    }
    Ok(out)
}

fn set_parameter(out: &mut TriadCalibration, index: usize, value: f64) {
    match index {
        0..=2 => out.bias[index] = value,
        3..=5 => out.scale_factor[index - 3] = value,
        _ => {
            let k = index - 6;
            let row = k / 2;
            let column = if k % 2 < row { k % 2 } else { k % 2 + 1 };
            out.misalignment[(row, column)] = value;
        }
    }
}

fn check_noise(sigma: &Vector3<f64>) -> Result<()> {
    limits::check_vector(sigma, crate::nav::MAX_SENSOR_ERROR, "sensor units", "noise")?;
    if sigma.iter().any(|&s| s <= 0.0) {
        return Err(Error::Invalid { quantity: "noise", reason: "standard deviations must be positive" });
    }
    Ok(())
}

/// The parameters of the magnitude fit, in its parameter vector: bias (3), scale factors (3),
/// `M_yx`, `M_zx`, `M_zy`.
const MAGNITUDE_PARAMETERS: [usize; 9] =
    [0, 1, 2, 3, 4, 5, misalignment_index(1, 0), misalignment_index(2, 0), misalignment_index(2, 1)];

/// The gain `U = I + diag(s) + M` (M lower triangular) of the magnitude fit's parameters.
fn magnitude_gain(theta: &SVector<f64, 9>) -> Matrix3<f64> {
    Matrix3::new(1.0 + theta[3], 0.0, 0.0, theta[6], 1.0 + theta[4], 0.0, theta[7], theta[8], 1.0 + theta[5])
}

/// `U⁻¹ v` for lower-triangular `U` (forward substitution).
fn solve_lower(u: &Matrix3<f64>, v: &Vector3<f64>) -> Vector3<f64> {
    let x0 = v.x / u[(0, 0)];
    let x1 = (v.y - u[(1, 0)] * x0) / u[(1, 1)];
    let x2 = (v.z - u[(2, 0)] * x0 - u[(2, 1)] * x1) / u[(2, 2)];
    Vector3::new(x0, x1, x2)
}

/// `U⁻ᵀ v` for lower-triangular `U` (back substitution with `Uᵀ`).
fn solve_lower_transposed(u: &Matrix3<f64>, v: &Vector3<f64>) -> Vector3<f64> {
    let x2 = v.z / u[(2, 2)];
    let x1 = (v.y - u[(2, 1)] * x2) / u[(1, 1)];
    let x0 = (v.x - u[(1, 0)] * x1 - u[(2, 0)] * x2) / u[(0, 0)];
    Vector3::new(x0, x1, x2)
}

/// One position's residual `‖U⁻¹(x̃ − b)‖ − g`, its gradient with respect to the nine
/// parameters, and its weight's inverse (the residual's standard deviation for a given
/// per-axis noise, else 1).
fn magnitude_row(
    theta: &SVector<f64, 9>,
    u: &Matrix3<f64>,
    measured: &Vector3<f64>,
    g: f64,
    noise: Option<&Vector3<f64>>,
) -> (f64, SVector<f64, 9>, f64) {
    let bias = Vector3::new(theta[0], theta[1], theta[2]);
    let x = solve_lower(u, &(measured - bias));
    let norm = x.norm();
    let w = solve_lower_transposed(u, &(x / norm));
    let gradient = SVector::<f64, 9>::from_column_slice(&[
        -w.x,
        -w.y,
        -w.z,
        -w.x * x.x,
        -w.y * x.y,
        -w.z * x.z,
        -w.y * x.x,
        -w.z * x.x,
        -w.z * x.y,
    ]);
    // ∂r/∂x̃ = U⁻ᵀ u = w: the residual's variance is Σ w_i² σ_i².
    let sigma = noise.map_or(1.0, |n| math::sqrt(w.component_mul(n).norm_squared()));
    (norm - g, gradient, sigma)
}

/// Calibrates an accelerometer triad from static positions whose attitudes are not known, by
/// fitting the corrected specific force's magnitude to the site's gravity (see the
/// [module documentation](super)): nine parameters (bias, scale factors, `M_yx`, `M_zx`,
/// `M_zy`; the others are zero by definition of the calibrated frame). `noise` and
/// `residuals` are as in [`calibrate_accelerometers`] (the residuals are the magnitude
/// residuals, m/s², one per position; length the number of positions).
///
/// # Errors
/// [`Error::Invalid`] naming `specific_force` for fewer than 9 positions (10 without
/// `noise`) or when the iteration does not converge in 200 steps; [`Error::Unobservable`]
/// naming `specific_force` with the parameters the positions cannot determine (they must
/// point the triad in many directions: at least nine, well spread); [`Error::NonFinite`],
/// [`Error::BeyondLimit`] or [`Error::ZeroNorm`] naming `specific_force`; as
/// [`calibrate_accelerometers`] otherwise.
///
/// ```
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::calibrate::{calibrate_accelerometers_by_magnitude, CalibrationSite};
/// let site = CalibrationSite::new(0.84, 250.0);
/// let g = site.specific_force_ned().unwrap();
/// // Fourteen attitudes the operator did not record; the triad has a 0.02 m/s² z bias.
/// let readings: Vec<Vector3<f64>> = (0..14)
///     .map(|k| {
///         let k = f64::from(k);
///         let q = UnitQuaternion::from_euler_angles(1.3 * k, 0.7 * k - 1.0, 0.4 * k);
///         q.inverse_transform_vector(&g) + Vector3::new(0.0, 0.0, 0.02)
///     })
///     .collect();
/// let cal = calibrate_accelerometers_by_magnitude(&site, readings, None, None).unwrap();
/// assert!((cal.bias.z - 0.02).abs() < 1e-10);
/// ```
pub fn calibrate_accelerometers_by_magnitude<I>(
    site: &CalibrationSite,
    specific_force: I,
    noise: Option<&Vector3<f64>>,
    residuals: Option<&mut [f64]>,
) -> Result<TriadCalibration>
where
    I: IntoIterator<Item = Vector3<f64>>,
    I::IntoIter: Clone + ExactSizeIterator,
{
    const QUANTITY: &str = "specific_force";
    let specific_force = specific_force.into_iter();
    let g = site.specific_force_ned()?.norm();
    for f in specific_force.clone() {
        limits::check_vector(&f, MAX_ACCELERATION, "m/s²", QUANTITY)?;
        if f.norm() == 0.0 {
            return Err(Error::ZeroNorm { quantity: QUANTITY });
        }
    }
    if let Some(sigma) = noise {
        check_noise(sigma)?;
    }
    let count = specific_force.len();
    if count < 9 + usize::from(noise.is_none()) {
        return Err(Error::Invalid {
            quantity: QUANTITY,
            reason: "too few positions: the magnitude fit has nine parameters and needs at least nine positions (ten when the noise is estimated from the residuals)",
        });
    }
    if let Some(r) = &residuals
        && r.len() != count
    {
        return Err(Error::LengthMismatch { quantity: "residuals", found: r.len(), expected: count });
    }
    // The cost and, optionally, a QR of the (damped) weighted Jacobian at θ.
    let evaluate = |theta: &SVector<f64, 9>| -> (f64, SequentialQr<9>, SVector<f64, 9>) {
        let u = magnitude_gain(theta);
        let mut qr = SequentialQr::<9>::new();
        let mut cost = 0.0;
        let mut column_norms = SVector::<f64, 9>::zeros();
        for f in specific_force.clone() {
            let (r, gradient, sigma) = magnitude_row(theta, &u, &f, g, noise);
            let (r, gradient) = (r / sigma, gradient / sigma);
            cost += r * r;
            column_norms += gradient.component_mul(&gradient);
            qr.add_row(&gradient, -r);
        }
        (cost, qr, column_norms)
    };
    let mut theta = SVector::<f64, 9>::zeros();
    let (mut cost, mut qr, mut column_norms) = evaluate(&theta);
    let mut damping = 1e-3;
    let mut converged = false;
    for _ in 0..200 {
        // Marquardt: solve the system with rows √λ diag(JᵀJ)^½ added.
        let mut damped = qr;
        for j in 0..9 {
            let mut e = SVector::<f64, 9>::zeros();
            e[j] = math::sqrt(damping * column_norms[j]);
            damped.add_row(&e, 0.0);
        }
        if damped.rank().unobservable != 0 {
            break;
        }
        let (step, _) = damped.solve();
        let trial = theta + step;
        if !trial.iter().all(|x| x.is_finite()) || (0..3).any(|i| magnitude_gain(&trial)[(i, i)] <= 0.0) {
            damping *= 10.0;
            continue;
        }
        let (trial_cost, trial_qr, trial_norms) = evaluate(&trial);
        let small_step = step.iter().zip(theta.iter()).all(|(d, t)| d.abs() <= 1e-14 * (1.0 + t.abs()));
        if trial_cost <= cost {
            theta = trial;
            let settled = cost - trial_cost <= 1e-15 * cost;
            (cost, qr, column_norms) = (trial_cost, trial_qr, trial_norms);
            damping = (damping / 3.0).max(1e-12);
            if small_step || (settled && damping <= 1e-6) {
                converged = true;
                break;
            }
        } else {
            if small_step {
                converged = true;
                break;
            }
            damping *= 2.0;
        }
    }
    let rank = qr.rank();
    if rank.unobservable != 0 {
        let mut parameters = 0u16;
        for (c, &index) in MAGNITUDE_PARAMETERS.iter().enumerate() {
            if rank.unobservable & (1 << c) != 0 {
                parameters |= 1 << index;
            }
        }
        return Err(Error::Unobservable {
            quantity: QUANTITY,
            parameters: ParameterSet(parameters),
            reason: "the positions do not point the triad in enough directions; use at least nine, well spread over the sphere",
        });
    }
    if !converged {
        return Err(Error::Invalid { quantity: QUANTITY, reason: "the magnitude fit did not converge in 200 iterations" });
    }
    let (_, unscaled) = qr.solve();
    let rss_weighted = qr.residual_sum_of_squares();
    // Residual variance: from the weighted residuals without noise (weights 1).
    let scale2 = if noise.is_some() { 1.0 } else { rss_weighted / (count - 9) as f64 };
    let mut out = TriadCalibration::perfect();
    out.condition_number = rank.condition_number;
    out.degrees_of_freedom = count - 9;
    let u = magnitude_gain(&theta);
    let mut sum_squares = 0.0;
    let residual_slots = residuals.map(|r| r.iter_mut());
    let mut slots = residual_slots;
    for f in specific_force {
        let (r, _, _) = magnitude_row(&theta, &u, &f, g, None);
        sum_squares += r * r;
        if let Some(s) = slots.as_mut()
            && let Some(slot) = s.next()
        {
            *slot = r;
        }
    }
    out.residual_rms = Vector3::repeat(math::sqrt(sum_squares / count as f64));
    out.noise = match noise {
        Some(n) => *n,
        None => Vector3::repeat(math::sqrt(sum_squares / (count - 9) as f64)),
    };
    for (c, &index) in MAGNITUDE_PARAMETERS.iter().enumerate() {
        out.estimated.0 |= 1 << index;
        set_parameter(&mut out, index, theta[c]);
        for (d, &other) in MAGNITUDE_PARAMETERS.iter().enumerate() {
            out.covariance[(index, other)] = scale2 * unscaled[(c, d)];
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axis_columns_map_the_design_to_the_parameter_order() {
        assert_eq!(axis_columns::<4>(1), ([0, 1, 2, 3], [1, misalignment_index(1, 0), 4, misalignment_index(1, 2)]));
        assert_eq!(axis_columns::<2>(2), ([0, 3], [2, 5]));
        assert_eq!(axis_columns::<1>(0), ([0], [0]));
    }

    #[test]
    fn set_parameter_inverts_the_misalignment_index() {
        let mut cal = TriadCalibration::perfect();
        for i in 0..3 {
            for j in 0..3 {
                if i != j {
                    set_parameter(&mut cal, misalignment_index(i, j), (10 * i + j) as f64);
                }
            }
        }
        for i in 0..3 {
            for j in 0..3 {
                assert_eq!(cal.misalignment[(i, j)], if i == j { 0.0 } else { (10 * i + j) as f64 });
            }
        }
    }

    #[test]
    fn mean_cos_sin_matches_the_integral() {
        // Midpoint rule with 10⁵ panels (error ~Θ³/(24 n²) relative), common practice.
        for angle in [1e-9, 0.3, 2.0, -5.0, 40.0] {
            let n = 100_000;
            let (mut c, mut s) = (0.0, 0.0);
            for k in 0..n {
                let t = angle * (k as f64 + 0.5) / n as f64;
                c += t.cos() / n as f64;
                s += t.sin() / n as f64;
            }
            let (mc, ms) = mean_cos_sin(angle);
            assert!((mc - c).abs() < 1e-9 && (ms - s).abs() < 1e-9, "{angle}");
        }
    }
}
