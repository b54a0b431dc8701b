//! IMU calibration from multi-position and rate-table tests, Allan deviation and the noise
//! terms read from it (the core's `calibrate`).
//!
//! Parameters are ordered `b_x, b_y, b_z, s_x, s_y, s_z, M_xy, M_xz, M_yx, M_yz, M_zx, M_zy`
//! in every 12-vector and the 12 × 12 covariance (row-major); matrices are row-major. All
//! storage is the caller's; outputs are untouched on error.

use rotaframe::calibrate::allan::{self, AllanPoint, DominantNoise, NoiseTerms};
use rotaframe::calibrate::{
    self as cal, AccelerometerPosition, CalibrationSite, GyroRecord, ParameterSet, TriadCalibration, TriadParameters,
};
use rotaframe::nalgebra::{Matrix3, SMatrix, UnitQuaternion, Vector3};

use crate::status::{
    Fallible, RF_STATUS_INVALID_ARGUMENT, boundary, disjoint, distinct_outputs, out, read, region, rf_status, slice, slice_mut,
};
use crate::types::{put_row_major, rf_earth_model, rf_quat, rf_vec3};

/// Which parameters a calibration with known attitudes estimates, for `parameters`.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_triad_parameters {
    /// Bias, scale factors and misalignments (12).
    RF_TRIAD_FULL = 0,
    /// Bias and scale factors (6).
    RF_TRIAD_BIAS_SCALE = 1,
    /// Bias only (3).
    RF_TRIAD_BIAS = 2,
}

crate::enums::c_enum!(rf_triad_parameters { RF_TRIAD_FULL, RF_TRIAD_BIAS_SCALE, RF_TRIAD_BIAS });

/// Where a calibration test runs. All-zero is WGS 84, normal gravity, on the equator at zero
/// height.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_calibration_site {
    /// The Earth model.
    pub model: rf_earth_model,
    /// An `rf_gravity_model` value (for the accelerometers' reference).
    pub gravity: u32,
    /// Geodetic latitude (rad).
    pub latitude: f64,
    /// Ellipsoidal height (m).
    pub height: f64,
}

/// One static position of an accelerometer test.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_accelerometer_position {
    /// Body-to-NED attitude.
    pub attitude: rf_quat,
    /// Mean accelerometer output (m/s², body axes).
    pub specific_force: rf_vec3,
}

/// One record of a gyro test: a static position (`table_rate` 0) or a rate-table run.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_gyro_record {
    /// Body-to-NED attitude at the start of the record.
    pub attitude: rf_quat,
    /// The table's spin axis, resolved in NED (ignored when `table_rate` is 0).
    pub table_axis_ned: rf_vec3,
    /// The table's rate about its axis (rad/s).
    pub table_rate: f64,
    /// The length of the record (s; ignored when `table_rate` is 0).
    pub duration: f64,
    /// Mean gyro output over the record (rad/s, body axes).
    pub angular_rate: rf_vec3,
}

/// The calibration of one triad.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct rf_triad_calibration {
    /// Bias (rad/s or m/s²).
    pub bias: rf_vec3,
    /// Scale-factor errors (dimensionless).
    pub scale_factor: rf_vec3,
    /// Misalignment, row-major, zero diagonal (dimensionless).
    pub misalignment: [f64; 9],
    /// Covariance of the 12 parameters, row-major.
    pub covariance: [f64; 144],
    /// RMS of the residuals per axis.
    pub residual_rms: rf_vec3,
    /// The per-axis noise of one position's mean behind the covariance.
    pub noise: rf_vec3,
    /// Condition number of the column-scaled design.
    pub condition_number: f64,
    /// Observations minus parameters (per axis for the fits with known attitudes).
    pub degrees_of_freedom: u64,
    /// Bit j set: parameter j was estimated.
    pub estimated: u64,
}

impl From<&TriadCalibration> for rf_triad_calibration {
    fn from(c: &TriadCalibration) -> Self {
        let mut misalignment = [0.0; 9];
        put_row_major(&mut misalignment, &c.misalignment);
        let mut covariance = [0.0; 144];
        put_row_major(&mut covariance, &c.covariance);
        Self {
            bias: c.bias.into(),
            scale_factor: c.scale_factor.into(),
            misalignment,
            covariance,
            residual_rms: c.residual_rms.into(),
            noise: c.noise.into(),
            condition_number: c.condition_number,
            degrees_of_freedom: c.degrees_of_freedom as u64,
            estimated: u64::from(c.estimated.0),
        }
    }
}

impl rf_triad_calibration {
    fn to_core(self) -> TriadCalibration {
        TriadCalibration {
            bias: self.bias.into(),
            scale_factor: self.scale_factor.into(),
            misalignment: Matrix3::from_row_slice(&self.misalignment),
            covariance: SMatrix::<f64, 12, 12>::from_row_slice(&self.covariance),
            residual_rms: self.residual_rms.into(),
            noise: self.noise.into(),
            condition_number: self.condition_number,
            degrees_of_freedom: usize::try_from(self.degrees_of_freedom).unwrap_or(usize::MAX),
            estimated: ParameterSet((self.estimated & 0x0fff) as u16),
        }
    }
}

fn site(s: &rf_calibration_site) -> Fallible<CalibrationSite> {
    Ok(CalibrationSite {
        model: s.model.to_core()?,
        gravity: crate::nav::gravity_model(s.gravity)?,
        latitude: s.latitude,
        height: s.height,
    })
}

fn parameters(value: u32) -> Fallible<TriadParameters> {
    match rf_triad_parameters::from_u32(value).ok_or(RF_STATUS_INVALID_ARGUMENT)? {
        rf_triad_parameters::RF_TRIAD_FULL => Ok(TriadParameters::Full),
        rf_triad_parameters::RF_TRIAD_BIAS_SCALE => Ok(TriadParameters::BiasAndScale),
        rf_triad_parameters::RF_TRIAD_BIAS => Ok(TriadParameters::Bias),
    }
}

/// The optional noise (NULL: estimated from the residuals).
unsafe fn noise(p: *const rf_vec3) -> Fallible<Option<Vector3<f64>>> {
    if p.is_null() { Ok(None) } else { Ok(Some(unsafe { read(p) }?.into())) }
}

/// Attitudes validated once, so that the iterators below cannot fail.
fn attitudes<'a>(quats: impl Iterator<Item = &'a rf_quat>) -> Fallible<()> {
    for q in quats {
        q.to_core("attitude")?;
    }
    Ok(())
}

fn unit(q: &rf_quat) -> UnitQuaternion<f64> {
    q.to_core("attitude").unwrap_or_else(|_| UnitQuaternion::identity())
}

/// The optional residual output of `n` values, disjoint from the input region.
unsafe fn residual_slot<'a>(p: *mut f64, n: usize, input: (usize, usize)) -> Fallible<Option<&'a mut [f64]>> {
    if p.is_null() {
        return Ok(None);
    }
    disjoint(region(p, n), &[input])?;
    Ok(Some(unsafe { slice_mut(p, n) }?))
}

/// Calibrates an accelerometer triad from `count` static positions with known attitudes
/// (least squares against the site's plumb-line gravity). `parameters` is an
/// `rf_triad_parameters` value; `noise` the standard deviation of a position's mean per axis
/// (NULL: estimated from the residuals); `out_residuals` (NULL, or `3 count` values: x, y, z
/// per position, measured minus model) receives the residuals. `RF_STATUS_UNOBSERVABLE` when
/// the positions cannot determine the parameters asked for; `RF_STATUS_INVALID_ARGUMENT` for
/// too few positions.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_calibrate_accelerometers(
    calibration_site: *const rf_calibration_site,
    positions: *const rf_accelerometer_position,
    count: usize,
    parameters_estimated: u32,
    noise_per_axis: *const rf_vec3,
    out_calibration: *mut rf_triad_calibration,
    out_residuals: *mut f64,
) -> rf_status {
    boundary(|| {
        let s = site(&unsafe { read(calibration_site) }?)?;
        let p = unsafe { slice(positions, count) }?;
        let sigma = unsafe { noise(noise_per_axis) }?;
        attitudes(p.iter().map(|x| &x.attitude))?;
        distinct_outputs(&[
            region(out_calibration, 1),
            region(out_residuals, if out_residuals.is_null() { 0 } else { 3 * count }),
        ])?;
        let residuals = unsafe { residual_slot(out_residuals, 3 * count, region(positions, count)) }?;
        let o = unsafe { out(out_calibration) }?;
        let positions =
            p.iter().map(|x| AccelerometerPosition { attitude: unit(&x.attitude), specific_force: x.specific_force.into() });
        // The core writes the residuals last, only once the fit has succeeded.
        let result = cal::calibrate_accelerometers(&s, positions, parameters(parameters_estimated)?, sigma.as_ref(), residuals)?;
        *o = (&result).into();
        Ok(())
    })
}

/// Calibrates a gyro triad from `count` static positions and rate-table runs (see
/// `rf_gyro_record`), as `rf_calibrate_accelerometers` otherwise. Static positions alone
/// determine only the biases (`RF_TRIAD_BIAS`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_calibrate_gyros(
    calibration_site: *const rf_calibration_site,
    records: *const rf_gyro_record,
    count: usize,
    parameters_estimated: u32,
    noise_per_axis: *const rf_vec3,
    out_calibration: *mut rf_triad_calibration,
    out_residuals: *mut f64,
) -> rf_status {
    boundary(|| {
        let s = site(&unsafe { read(calibration_site) }?)?;
        let r = unsafe { slice(records, count) }?;
        let sigma = unsafe { noise(noise_per_axis) }?;
        attitudes(r.iter().map(|x| &x.attitude))?;
        distinct_outputs(&[
            region(out_calibration, 1),
            region(out_residuals, if out_residuals.is_null() { 0 } else { 3 * count }),
        ])?;
        let residuals = unsafe { residual_slot(out_residuals, 3 * count, region(records, count)) }?;
        let o = unsafe { out(out_calibration) }?;
        let records = r.iter().map(|x| GyroRecord {
            attitude: unit(&x.attitude),
            table_axis_ned: x.table_axis_ned.into(),
            table_rate: x.table_rate,
            duration: x.duration,
            angular_rate: x.angular_rate.into(),
        });
        let result = cal::calibrate_gyros(&s, records, parameters(parameters_estimated)?, sigma.as_ref(), residuals)?;
        *o = (&result).into();
        Ok(())
    })
}

/// Calibrates an accelerometer triad from `count` static readings whose attitudes are not
/// known, by fitting the corrected specific force's magnitude to the site's gravity (at least
/// 9 positions with `noise`, 10 without, well spread). Nine parameters: bias, scale factors,
/// `M_yx`, `M_zx`, `M_zy` (the calibrated frame has x along the x accelerometer and y in the
/// plane of x and y). `out_residuals`: NULL or `count` magnitude residuals (m/s²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_calibrate_accelerometers_by_magnitude(
    calibration_site: *const rf_calibration_site,
    specific_force: *const rf_vec3,
    count: usize,
    noise_per_axis: *const rf_vec3,
    out_calibration: *mut rf_triad_calibration,
    out_residuals: *mut f64,
) -> rf_status {
    boundary(|| {
        let s = site(&unsafe { read(calibration_site) }?)?;
        let f = unsafe { slice(specific_force, count) }?;
        let sigma = unsafe { noise(noise_per_axis) }?;
        distinct_outputs(&[region(out_calibration, 1), region(out_residuals, if out_residuals.is_null() { 0 } else { count })])?;
        let residuals = unsafe { residual_slot(out_residuals, count, region(specific_force, count)) }?;
        let o = unsafe { out(out_calibration) }?;
        let forces = f.iter().map(|&v| Vector3::from(v));
        let result = cal::calibrate_accelerometers_by_magnitude(&s, forces, sigma.as_ref(), residuals)?;
        *o = (&result).into();
        Ok(())
    })
}

/// Removes a triad's calibration from an increment measured over `interval` (s): the exact
/// inverse of the error model without noise, `x = (I + diag(s) + M)⁻¹ (x̃ − b T)`. `out` may
/// alias `measured`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_triad_correct_increment(
    calibration: *const rf_triad_calibration,
    measured: *const rf_vec3,
    interval: f64,
    out_corrected: *mut rf_vec3,
) -> rf_status {
    boundary(|| {
        let c = unsafe { read(calibration) }?.to_core();
        let m: Vector3<f64> = unsafe { read(measured) }?.into();
        rotaframe::nav::ImuIncrement::new(Vector3::zeros(), Vector3::zeros(), interval).validate()?;
        let x = c.correct_increment(&m, interval)?;
        *unsafe { out(out_corrected) }? = x.into();
        Ok(())
    })
}

/// The noise taken to dominate an Allan-deviation point, for `rf_allan_point.dominant`.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_dominant_noise {
    /// White noise of the integrated output (slope −1).
    RF_NOISE_QUANTIZATION = 0,
    /// White rate noise: angle or velocity random walk (slope −½).
    RF_NOISE_WHITE = 1,
    /// Flicker rate noise: bias instability (slope 0).
    RF_NOISE_BIAS_INSTABILITY = 2,
    /// Rate random walk (slope +½).
    RF_NOISE_RATE_RANDOM_WALK = 3,
}

/// One point of an Allan-deviation curve.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_allan_point {
    /// Cluster time τ (s).
    pub tau: f64,
    /// Cluster size (samples).
    pub cluster_size: u64,
    /// Overlapping Allan deviation.
    pub deviation: f64,
    /// Lower confidence bound.
    pub lower: f64,
    /// Upper confidence bound.
    pub upper: f64,
    /// Equivalent degrees of freedom behind the bounds.
    pub degrees_of_freedom: f64,
    /// The noise taken to dominate (an `rf_dominant_noise` value), which sets the degrees of
    /// freedom.
    pub dominant: u32,
}

/// Writes the default cluster sizes (octaves 1, 2, 4, … up to `(samples − 1)/2`) for a record
/// of `samples` into `out_sizes` (room for `capacity`; 64 always suffice) and their number
/// into `out_count`. A `capacity` below their number is refused (`RF_STATUS_INVALID_ARGUMENT`)
/// and nothing is written.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_allan_default_cluster_sizes(
    samples: usize,
    out_sizes: *mut u64,
    capacity: usize,
    out_count: *mut usize,
) -> rf_status {
    boundary(|| {
        let mut sizes = [0usize; 64];
        let n = allan::default_cluster_sizes(samples, &mut sizes);
        // All of the list or nothing: a capacity below it is refused (not silently cut).
        if capacity < n {
            return Err(rotaframe::Error::LengthMismatch { quantity: "capacity", found: capacity, expected: n }.into());
        }
        disjoint(region(out_count.cast_const(), 1), &[region(out_sizes.cast_const(), n)])?;
        let count = unsafe { out(out_count) }?;
        let o = unsafe { slice_mut(out_sizes, n) }?;
        for (o, &m) in o.iter_mut().zip(&sizes[..n]) {
            *o = m as u64;
        }
        *count = n;
        Ok(())
    })
}

/// The overlapping Allan deviation of `count` rate samples at `interval` (s), at each of the
/// `size_count` cluster sizes (at most `RF_MAX_CLUSTER_SIZES`, 64), with bounds at
/// `confidence` (0.683 for one sigma), into `out_points[size_count]`. `scratch` holds
/// `count + 1` values (the integrated record). The sample buffer is read in place; nothing is
/// allocated.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_allan_deviation(
    samples: *const f64,
    count: usize,
    interval: f64,
    cluster_sizes: *const u64,
    size_count: usize,
    confidence: f64,
    scratch: *mut f64,
    out_points: *mut rf_allan_point,
) -> rf_status {
    boundary(|| {
        let x = unsafe { slice(samples, count) }?;
        let m = unsafe { slice(cluster_sizes, size_count) }?;
        let inputs = [region(samples, count), region(cluster_sizes, size_count)];
        disjoint(region(scratch, count + 1), &inputs)?;
        disjoint(region(out_points, size_count), &[inputs[0], inputs[1], region(scratch, count + 1)])?;
        if size_count > RF_MAX_CLUSTER_SIZES {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        let work = unsafe { slice_mut(scratch, count + 1) }?;
        let o = unsafe { slice_mut(out_points, size_count) }?;
        let mut sizes = [0usize; RF_MAX_CLUSTER_SIZES];
        for (s, &v) in sizes.iter_mut().zip(m) {
            *s = usize::try_from(v).map_err(|_| RF_STATUS_INVALID_ARGUMENT)?;
        }
        let mut points = [AllanPoint::default(); RF_MAX_CLUSTER_SIZES];
        allan::allan_deviation(x, interval, &sizes[..size_count], confidence, work, &mut points[..size_count])?;
        for (o, p) in o.iter_mut().zip(&points) {
            *o = rf_allan_point {
                tau: p.tau,
                cluster_size: p.cluster_size as u64,
                deviation: p.deviation,
                lower: p.lower,
                upper: p.upper,
                degrees_of_freedom: p.degrees_of_freedom,
                dominant: (match p.dominant {
                    DominantNoise::Quantization => rf_dominant_noise::RF_NOISE_QUANTIZATION,
                    DominantNoise::WhiteNoise => rf_dominant_noise::RF_NOISE_WHITE,
                    DominantNoise::BiasInstability => rf_dominant_noise::RF_NOISE_BIAS_INSTABILITY,
                    DominantNoise::RateRandomWalk => rf_dominant_noise::RF_NOISE_RATE_RANDOM_WALK,
                }) as u32,
            };
        }
        Ok(())
    })
}

/// The most cluster sizes one `rf_allan_deviation` call takes (the octaves of any record fit).
pub const RF_MAX_CLUSTER_SIZES: usize = 64;

/// Noise terms of a rate sensor (SI units of its output).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_noise_terms {
    /// White rate noise density N (rad/√s or m/s/√s): the −½ slope at τ = 1 s.
    pub white_noise: f64,
    /// Bias instability B (rad/s or m/s²): the flat part over 0.664.
    pub bias_instability: f64,
    /// Rate random walk K (rad/s/√s or m/s²/√s): the +½ slope at τ = 3 s.
    pub rate_random_walk: f64,
}

/// Fits white noise, bias instability and rate random walk to `count` points of an Allan
/// deviation curve (`taus` in s, `deviations`); `degrees_of_freedom` (NULL, or one per point)
/// weights the points, else they are weighted by 1/τ.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_fit_noise_terms(
    taus: *const f64,
    deviations: *const f64,
    count: usize,
    degrees_of_freedom: *const f64,
    out_terms: *mut rf_noise_terms,
) -> rf_status {
    boundary(|| {
        let t = unsafe { slice(taus, count) }?;
        let d = unsafe { slice(deviations, count) }?;
        let w = if degrees_of_freedom.is_null() { None } else { Some(unsafe { slice(degrees_of_freedom, count) }?) };
        let fit: NoiseTerms = allan::fit_noise_terms(t, d, w)?;
        *unsafe { out(out_terms) }? = rf_noise_terms {
            white_noise: fit.white_noise,
            bias_instability: fit.bias_instability,
            rate_random_walk: fit.rate_random_walk,
        };
        Ok(())
    })
}
