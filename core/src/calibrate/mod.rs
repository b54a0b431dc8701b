//! IMU calibration from laboratory tests, and Allan-variance analysis of static records.
//!
//! # The error model estimated
//!
//! The calibrations estimate the deterministic part of the [`nav::sensor`](crate::nav::sensor)
//! model, for one triad at a time, in the same conventions, so that a calibration estimated
//! here corrects exactly the data that model describes:
//!
//! ```text
//! x̃ = (I + diag(s) + M) x + b
//! ```
//!
//! with `x` the true rate or specific force in body axes, `x̃` the sensor's output, `b` the
//! bias, `s` the scale-factor errors and `M` the misalignment (zero diagonal; `M[i][j]` is how
//! much of the true component `j` axis `i` sees). The twelve parameters are ordered
//! `b_x, b_y, b_z, s_x, s_y, s_z, M_xy, M_xz, M_yx, M_yz, M_zx, M_zy` in every vector and
//! covariance ([`PARAMETER_NAMES`]).
//!
//! # Tests with known attitudes: linear least squares
//!
//! At each position `k` the reference `x_k` is known in body axes: the specific force
//! `f^b = C_nᵇ (−g^n)` of the site's plumb-line gravity ([`earth::gravity`](crate::earth)) for
//! accelerometers; for gyros the Earth rate `Ω_ie^n` ([`earth::earth_rate_ned`]) plus, on a rate
//! table turning at `ω_t` about the axis `a^n` for a time `T`, the table's rate, both resolved
//! in body axes through the attitude `C_b^n(0)` at the start of the record:
//!
//! ```text
//! x_k = ω_t C_nᵇ(0) a^n + C_nᵇ(0) R̄ᵀ Ω_ie^n,
//! R̄ = (1/T) ∫₀ᵀ R_a(ω_t t) dt = (sin Θ/Θ) I + ((1 − cos Θ)/Θ) [a×] + (1 − sin Θ/Θ) a aᵀ,  Θ = ω_t T
//! ```
//!
//! (the mean of the rotated Earth rate over the record, from Rodrigues' formula; a record of
//! whole turns keeps only the Earth rate's component along the axis). The model is linear in
//! the parameters and decouples by axis: `x̃_i − x_i = b_i + Σ_j K_ij x_j` with
//! `K = diag(s) + M`, the same design `[1, x_x, x_y, x_z]` for every axis. Each axis is
//! solved by sequential QR (see `lsq`); the covariance is `σ_i² (AᵀA)⁻¹` with the
//! per-axis noise `σ_i` of a position's mean either given or estimated from the residuals,
//! `σ_i² = RSS_i/(N − p)` (D. C. Montgomery, E. A. Peck, G. G. Vining, *Introduction to
//! Linear Regression Analysis*, 5th ed., Wiley 2012, §3.2; common practice). The positions
//! must span three dimensions: a design whose column-scaled singular values include one
//! below `1e-10` of the largest is refused with [`Error::Unobservable`] naming the parameters
//! it cannot separate (all positions with z up leave the x and y scale factors and most
//! misalignments unobservable, and the z bias inseparable from the z scale factor).
//!
//! This is the multi-position method of the calibration literature (for example D. H.
//! Titterton and J. L. Weston, *Strapdown Inertial Navigation Technology*, 2nd ed., IEE
//! 2004, §8.5, from memory of the section; IEEE Std 1293-1998 for accelerometer test
//! procedures, from memory), written as a least-squares problem.
//!
//! # Tests without attitudes: the magnitude fit
//!
//! [`calibrate_accelerometers_by_magnitude`] fits the corrected specific force's magnitude to
//! the site's gravity at every position: `r_k = ‖U⁻¹(x̃_k − b)‖ − g` with
//! `U = I + diag(s) + M`, by Levenberg–Marquardt (K. Levenberg, Q. Appl. Math. 2, 1944; D. W.
//! Marquardt, J. SIAM 11, 1963; here with Marquardt's diagonal scaling and the damped system
//! solved by the same sequential QR). A magnitude cannot see a rotation of the triad, so only
//! nine parameters are identifiable: the bias, the scale factors and the three misalignments
//! below the diagonal, `M_yx, M_zx, M_zy`; the others are zero by definition of the
//! calibrated frame (its x axis along the x accelerometer, its y axis in the plane of the x
//! and y accelerometers). This is the usual "multi-position, orientation-free" scheme (for
//! example I. Skog and P. Händel, "Calibration of a MEMS inertial measurement unit", XVIII
//! IMEKO World Congress, 2006, from memory), with our own parameterisation.
//!
//! # Allan deviation
//!
//! See [`allan`].

pub mod allan;
mod lsq;
mod parameters;
mod positions;
mod stats;

use nalgebra::{Matrix3, SMatrix, SVector, Vector3};

use crate::earth::{self, EarthModel, Geodetic, GravityModel, WGS84};
use crate::error::{Error, Result};
use crate::nav::{ImuErrorModel, ImuIncrement, SensorErrorModel};

pub use parameters::{PARAMETER_NAMES, ParameterSet, misalignment_index};
pub use positions::{
    AccelerometerPosition, GyroRecord, calibrate_accelerometers, calibrate_accelerometers_by_magnitude, calibrate_gyros,
};
pub use stats::chi_square_quantile;

/// Which parameters a calibration with known attitudes estimates (the others are taken as
/// zero).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[repr(u32)]
pub enum TriadParameters {
    /// Bias, scale factors and misalignments (12; 4 per axis).
    #[default]
    Full = 0,
    /// Bias and scale factors (6; 2 per axis).
    BiasAndScale = 1,
    /// Bias only (3): for static gyro positions, where the Earth rate is too small to show
    /// scale factors and misalignments.
    Bias = 2,
}

impl TriadParameters {
    /// The parameters estimated.
    #[must_use]
    pub fn set(self) -> ParameterSet {
        ParameterSet(match self {
            TriadParameters::Full => 0x0fff,
            TriadParameters::BiasAndScale => 0x003f,
            TriadParameters::Bias => 0x0007,
        })
    }
}

/// Where a calibration test runs: the Earth model, the gravity model, and the site's
/// geodetic latitude (rad) and ellipsoidal height (m). The longitude does not matter.
///
/// ```
/// use rotaframe::calibrate::CalibrationSite;
/// let lab = CalibrationSite::new(48.2_f64.to_radians(), 310.0);
/// let f = lab.specific_force_ned().unwrap();
/// assert!((f.z + 9.808).abs() < 2e-3); // a level accelerometer reads about 1 g up
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CalibrationSite {
    /// The Earth model (WGS 84 by default).
    pub model: EarthModel,
    /// The gravity model of the reference specific force.
    pub gravity: GravityModel,
    /// Geodetic latitude (rad).
    pub latitude: f64,
    /// Ellipsoidal height (m).
    pub height: f64,
}

impl CalibrationSite {
    /// A site on WGS 84 with normal gravity.
    #[must_use]
    pub fn new(latitude: f64, height: f64) -> Self {
        Self { model: WGS84, gravity: GravityModel::Normal, latitude, height }
    }

    /// The specific force a stationary accelerometer feels, resolved in NED: minus the
    /// plumb-line gravity (m/s²).
    ///
    /// # Errors
    /// As [`GravityModel::gravity_ned`] (naming `latitude` or `height`).
    pub fn specific_force_ned(&self) -> Result<Vector3<f64>> {
        Ok(-self.gravity.gravity_ned(&self.model, &Geodetic::new(self.latitude, 0.0, self.height))?)
    }

    /// The Earth's rate relative to inertial space resolved in NED (rad/s).
    ///
    /// # Errors
    /// As [`earth::earth_rate_ned`].
    pub fn earth_rate_ned(&self) -> Result<Vector3<f64>> {
        earth::earth_rate_ned(&self.model, self.latitude)
    }
}

/// The calibration of one triad: the estimated parameters of `x̃ = (I + diag(s) + M) x + b`
/// (sensor units: rad/s or m/s² for `bias`, dimensionless otherwise), their covariance, and
/// the quality of the fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TriadCalibration {
    /// Bias per axis (rad/s or m/s²).
    pub bias: Vector3<f64>,
    /// Scale-factor error per axis (dimensionless).
    pub scale_factor: Vector3<f64>,
    /// Misalignment (dimensionless, zero diagonal).
    pub misalignment: Matrix3<f64>,
    /// Covariance of the twelve parameters in [`PARAMETER_NAMES`] order (zero rows and
    /// columns for parameters not estimated).
    pub covariance: SMatrix<f64, 12, 12>,
    /// Root mean square of the residuals per axis (sensor units; for the magnitude fit, the
    /// same value, of the magnitude residuals, on every axis).
    pub residual_rms: Vector3<f64>,
    /// The noise of one position's mean per axis behind the covariance: given, or estimated
    /// from the residuals.
    pub noise: Vector3<f64>,
    /// Observations minus parameters (per axis for the linear fits).
    pub degrees_of_freedom: usize,
    /// Condition number of the design with its columns scaled to unit norm (the largest of
    /// the three axes): near 1 for a well-spread set of positions.
    pub condition_number: f64,
    /// The parameters estimated (the others are zero by assumption).
    pub estimated: ParameterSet,
}

impl TriadCalibration {
    /// Checks a calibration rebuilt from saved numbers (a file, a pickle): every number
    /// finite, the sensor errors within [`MAX_SENSOR_ERROR`](crate::nav::MAX_SENSOR_ERROR),
    /// the misalignment's diagonal zero, the covariance symmetric with no negative variance,
    /// the residual RMS, noise and condition number non-negative, and the estimated set among
    /// the twelve parameters.
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::Invalid`] naming `calibration`.
    ///
    /// ```
    /// use rotaframe::calibrate::TriadCalibration;
    /// let mut c = TriadCalibration::perfect();
    /// assert!(c.validate().is_ok());
    /// c.bias.x = f64::NAN;
    /// assert!(c.validate().is_err());
    /// ```
    pub fn validate(&self) -> Result<()> {
        let invalid = |reason| Err(Error::Invalid { quantity: "calibration", reason });
        let numbers =
            [self.bias.as_slice(), self.scale_factor.as_slice(), self.misalignment.as_slice(), self.covariance.as_slice()];
        for values in numbers {
            crate::error::ensure_finite(values, "calibration")?;
        }
        let rest = [self.residual_rms.as_slice(), self.noise.as_slice(), core::slice::from_ref(&self.condition_number)];
        for values in rest {
            crate::error::ensure_finite(values, "calibration")?;
            if values.iter().any(|&v| v < 0.0) {
                return invalid("the residual RMS, noise and condition number must not be negative");
            }
        }
        let largest = self.bias.amax().max(self.scale_factor.amax()).max(self.misalignment.amax());
        if largest > crate::nav::MAX_SENSOR_ERROR {
            return invalid("a bias, scale factor or misalignment is beyond the supported sensor errors");
        }
        if (0..3).any(|i| self.misalignment[(i, i)] != 0.0) {
            return invalid("the misalignment's diagonal must be zero");
        }
        if self.covariance != self.covariance.transpose() || self.covariance.diagonal().iter().any(|&v| v < 0.0) {
            return invalid("the covariance must be symmetric with no negative variance");
        }
        if self.estimated.0 & !ParameterSet::ALL.0 != 0 {
            return invalid("the estimated set names a parameter beyond the twelve");
        }
        Ok(())
    }

    /// A perfect triad: every parameter zero and exactly known (for combining a calibrated
    /// triad with an uncalibrated one).
    #[must_use]
    pub fn perfect() -> Self {
        Self {
            bias: Vector3::zeros(),
            scale_factor: Vector3::zeros(),
            misalignment: Matrix3::zeros(),
            covariance: SMatrix::zeros(),
            residual_rms: Vector3::zeros(),
            noise: Vector3::zeros(),
            degrees_of_freedom: 0,
            condition_number: 1.0,
            estimated: ParameterSet(0),
        }
    }

    /// The twelve parameters in [`PARAMETER_NAMES`] order.
    #[must_use]
    pub fn parameters(&self) -> SVector<f64, 12> {
        let mut p = SVector::<f64, 12>::zeros();
        for i in 0..3 {
            p[i] = self.bias[i];
            p[3 + i] = self.scale_factor[i];
            for j in 0..3 {
                if i != j {
                    p[misalignment_index(i, j)] = self.misalignment[(i, j)];
                }
            }
        }
        p
    }

    /// The standard deviations of the twelve parameters (square roots of the covariance's
    /// diagonal).
    #[must_use]
    pub fn standard_deviations(&self) -> SVector<f64, 12> {
        SVector::from_fn(|i, _| crate::math::sqrt(self.covariance[(i, i)].max(0.0)))
    }

    /// The deterministic part of the sensor error model (`nav::SensorErrorModel` with this
    /// bias, scale factor and misalignment; no noise, no Gauss–Markov bias).
    ///
    /// # Errors
    /// As [`SensorErrorModel::validate`] (an estimate beyond the model's ranges, a scale
    /// factor or misalignment above 1, say).
    pub fn to_sensor_error_model(&self) -> Result<SensorErrorModel> {
        let model = SensorErrorModel {
            bias: self.bias,
            scale_factor: self.scale_factor,
            misalignment: self.misalignment,
            ..SensorErrorModel::default()
        };
        model.validate()?;
        Ok(model)
    }

    /// `I + diag(s) + M`.
    #[must_use]
    pub fn gain(&self) -> Matrix3<f64> {
        Matrix3::identity() + Matrix3::from_diagonal(&self.scale_factor) + self.misalignment
    }

    /// Removes the calibration from an increment measured over `interval` (s): the exact
    /// inverse of the error model without noise, `x = (I + diag(s) + M)⁻¹ (x̃ − b T)`.
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `measured` (magnitude up to
    /// [`MAX_FREE_VECTOR`](crate::limits::MAX_FREE_VECTOR)); as [`ImuIncrement::validate`] for
    /// `interval`; as [`to_sensor_error_model`](Self::to_sensor_error_model) for the
    /// parameters; [`Error::Invalid`] naming `scale_factor` when `I + diag(s) + M` is singular.
    ///
    /// ```
    /// use nalgebra::Vector3;
    /// use rotaframe::calibrate::TriadCalibration;
    /// let mut cal = TriadCalibration::perfect();
    /// cal.bias = Vector3::new(1e-3, 0.0, 0.0);
    /// cal.scale_factor = Vector3::new(0.0, 0.0, 2e-4);
    /// let measured = Vector3::new(0.01 + 1e-5, 0.0, -0.098 * (1.0 + 2e-4));
    /// let x = cal.correct_increment(&measured, 0.01).unwrap();
    /// assert!((x - Vector3::new(0.01, 0.0, -0.098)).norm() < 1e-16);
    /// ```
    pub fn correct_increment(&self, measured: &Vector3<f64>, interval: f64) -> Result<Vector3<f64>> {
        crate::limits::check_vector(measured, crate::limits::MAX_FREE_VECTOR, "sensor units", "measured")?;
        ImuIncrement::new(Vector3::zeros(), Vector3::zeros(), interval).validate()?;
        self.to_sensor_error_model()?;
        let inverse = self
            .gain()
            .try_inverse()
            .filter(|m| m.iter().all(|x| x.is_finite()))
            .ok_or(Error::Invalid { quantity: "scale_factor", reason: "I + diag(scale_factor) + misalignment is singular" })?;
        Ok(inverse * (measured - self.bias * interval))
    }
}

/// The calibrations of both triads of an IMU.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ImuCalibration {
    /// The gyro triad (rad/s).
    pub gyro: TriadCalibration,
    /// The accelerometer triad (m/s²).
    pub accelerometer: TriadCalibration,
}

impl ImuCalibration {
    /// The deterministic error model of both triads (for simulating a calibrated IMU with
    /// [`ImuErrorGenerator`](crate::nav::ImuErrorGenerator); add noise terms yourself).
    ///
    /// # Errors
    /// As [`TriadCalibration::to_sensor_error_model`].
    pub fn to_error_model(&self) -> Result<ImuErrorModel> {
        Ok(ImuErrorModel { gyro: self.gyro.to_sensor_error_model()?, accelerometer: self.accelerometer.to_sensor_error_model()? })
    }

    /// Removes both calibrations from a measured increment (see
    /// [`TriadCalibration::correct_increment`]).
    ///
    /// # Errors
    /// As [`ImuIncrement::validate`] and [`TriadCalibration::correct_increment`].
    pub fn correct(&self, measured: &ImuIncrement) -> Result<ImuIncrement> {
        measured.validate()?;
        let t = measured.interval;
        let delta_angle = self.gyro.correct_increment(&measured.delta_angle, t)?;
        let delta_velocity = self.accelerometer.correct_increment(&measured.delta_velocity, t)?;
        Ok(ImuIncrement { delta_angle, delta_velocity, interval: t })
    }
}
