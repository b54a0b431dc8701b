//! The IERS celestial-to-terrestrial transformation, CIO based (IERS Conventions 2010,
//! chapter 5): the rotation between the Geocentric Celestial Reference System ([`Gcrs`]) and
//! the International Terrestrial Reference System ([`Itrs`]), with its angular velocity and
//! acceleration.
//!
//! # The transformation (eq. 5.1)
//!
//! ```text
//! [GCRS] = Q(t) · R(t) · W(t) · [ITRS]
//! Q(t) = | 1 − aX²   −aXY       X           |
//!        | −aXY      1 − aY²    Y           | · R3(s),   a = 1/(1 + √(1 − X² − Y²))   (eq. 5.10)
//!        | −X        −Y         1 − a(X²+Y²) |
//! R(t) = R3(−θ),   θ the Earth Rotation Angle of UT1 (eq. 5.15)
//! W(t) = R3(−s′) · R2(xp) · R1(yp),   s′ = −47 µas · t (eqs. 5.3, 5.13)
//! ```
//!
//! with `R1, R2, R3` the rotations of the axes about x, y, z (`R3(θ)` = [[cos θ, sin θ, 0],
//! [−sin θ, cos θ, 0], [0, 0, 1]]) and `t` in Julian centuries of TT from J2000.0.
//!
//! `X, Y` are the CIP coordinates of the IAU 2006/2000A precession-nutation, and `s` the CIO
//! locator, from the series of the Conventions' tables 5.2a, 5.2b and 5.2d (generated into
//! `cip_series.rs` by `scripts/gen_cio_tables.py`): polynomials plus 1,311 frequencies,
//!
//! ```text
//! X = Σ_p x_p t^p + Σ_j Σ_p t^p (a_{s,j,p} sin φ_j + a_{c,j,p} cos φ_j),   φ_j = Σ_k m_{jk} F_k
//! s = −XY/2 + (the series of table 5.2d)
//! ```
//!
//! on the fourteen fundamental arguments `F_k` (eqs. 5.43, 5.44: the Delaunay arguments of the
//! Moon and Sun, the planets' mean longitudes and the general precession in longitude; the
//! polynomials from memory, checked against the reference library). The sines and cosines of
//! each `φ_j` come from those of the multiples `m·F_k`, built by complex multiplication once per
//! date, rather than from a call per term.
//!
//! The observed celestial pole offsets `dX, dY` are added to `X` and `Y` only; `s` is the
//! series' value with the model's `X, Y` (their effect on `s` is far below a microarcsecond).
//! Polar motion `xp, yp` and `dX, dY` come from Earth orientation data
//! ([`EarthOrientationView`]), as does `UT1 − UTC`.
//!
//! # Angular velocity and acceleration
//!
//! [`itrs_motion`] differentiates every step twice in TT: the series (the precession-nutation
//! rate, about 50″ a year), the Earth Rotation Angle through `dUT1/dTT = 1 + d(UT1 − UTC)/dt`,
//! and the polar motion and `dX, dY` through the derivatives of their interpolation; with the
//! rotation `C = QRW` (ITRS coordinates to GCRS), `[ω×] = Ċ Cᵀ` and `[α×] = C̈ Cᵀ + Ċ Ċᵀ`,
//! resolved in GCRS, per second of TT. The derivatives are carried exactly by second-order jets
//! (value, first and second derivative) through the same arithmetic.
//!
//! # Validity
//!
//! Dates within ten centuries of J2000.0 are accepted (the series are fitted for 1900–2100 and
//! degrade slowly outside it; beyond a few millennia `X` grows past where `Q` is defined).
//!
//! [`EarthOrientationView`]: crate::time::EarthOrientationView

use core::ops::{Add, Mul, Neg, Sub};

use nalgebra::{Matrix3, Rotation3, UnitQuaternion, Vector3};

use super::cip_series::{AMPLITUDES, FREQUENCIES, S_POLYNOMIAL, X_POLYNOMIAL, Y_POLYNOMIAL};
use crate::error::{Error, Result};
use crate::frames::{Gcrs, Itrs};
use crate::math;
use crate::motion::{FrameMotion, MotionParts};
use crate::time::orientation::{ARCSEC, MAX_POLE};
use crate::time::{EarthOrientationView, JulianDate, TimeScale};

/// Arcseconds in a full turn.
const TURN_ARCSEC: f64 = 1_296_000.0;
/// Days per Julian century.
const CENTURY_DAYS: f64 = 36_525.0;
/// The largest |t| accepted (Julian centuries from J2000.0).
const MAX_CENTURIES: f64 = 10.0;
/// The TIO locator's rate (rad per Julian century): −47 µas (IERS Conventions 2010, eq. 5.13).
const TIO_RATE: f64 = -47e-6 * ARCSEC;

/// The CIP coordinates `X, Y` and the CIO locator `s` (rad) of the IAU 2006/2000A model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CipCoordinates {
    /// X (rad).
    pub x: f64,
    /// Y (rad).
    pub y: f64,
    /// s (rad).
    pub s: f64,
}

/// Polar motion and the observed celestial pole offsets (rad) for the transformation.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PoleCoordinates {
    /// Pole coordinate x (rad).
    pub xp: f64,
    /// Pole coordinate y (rad).
    pub yp: f64,
    /// Celestial pole offset dX (rad), added to X.
    pub dx: f64,
    /// Celestial pole offset dY (rad), added to Y.
    pub dy: f64,
}

/// Numbers the series are evaluated in: plain values, or jets that carry two derivatives.
trait Number: Copy + Add<Output = Self> + Sub<Output = Self> + Mul<Output = Self> + Neg<Output = Self> {
    fn constant(value: f64) -> Self;
    fn value(self) -> f64;
    fn scale(self, k: f64) -> Self;
    /// `(sin self, cos self)`, given the sine and cosine of its value.
    fn sin_cos_from(self, sin: f64, cos: f64) -> (Self, Self);
    fn sqrt(self) -> Self;
    fn recip(self) -> Self;
}

impl Number for f64 {
    #[inline(always)]
    fn constant(value: f64) -> Self {
        value
    }
    #[inline(always)]
    fn value(self) -> f64 {
        self
    }
    #[inline(always)]
    fn scale(self, k: f64) -> Self {
        self * k
    }
    #[inline(always)]
    fn sin_cos_from(self, sin: f64, cos: f64) -> (Self, Self) {
        (sin, cos)
    }
    #[inline(always)]
    fn sqrt(self) -> Self {
        math::sqrt(self)
    }
    #[inline(always)]
    fn recip(self) -> Self {
        1.0 / self
    }
}

/// A value with its first and second derivatives in time.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
struct Jet {
    v: f64,
    d: f64,
    dd: f64,
}

impl Add for Jet {
    type Output = Jet;
    #[inline(always)]
    fn add(self, o: Jet) -> Jet {
        Jet { v: self.v + o.v, d: self.d + o.d, dd: self.dd + o.dd }
    }
}
impl Sub for Jet {
    type Output = Jet;
    #[inline(always)]
    fn sub(self, o: Jet) -> Jet {
        Jet { v: self.v - o.v, d: self.d - o.d, dd: self.dd - o.dd }
    }
}
impl Mul for Jet {
    type Output = Jet;
    #[inline(always)]
    fn mul(self, o: Jet) -> Jet {
        Jet { v: self.v * o.v, d: self.d * o.v + self.v * o.d, dd: self.dd * o.v + 2.0 * self.d * o.d + self.v * o.dd }
    }
}
impl Neg for Jet {
    type Output = Jet;
    #[inline(always)]
    fn neg(self) -> Jet {
        Jet { v: -self.v, d: -self.d, dd: -self.dd }
    }
}
impl Number for Jet {
    #[inline(always)]
    fn constant(value: f64) -> Self {
        Jet { v: value, d: 0.0, dd: 0.0 }
    }
    #[inline(always)]
    fn value(self) -> f64 {
        self.v
    }
    #[inline(always)]
    fn scale(self, k: f64) -> Self {
        Jet { v: self.v * k, d: self.d * k, dd: self.dd * k }
    }
    #[inline(always)]
    fn sin_cos_from(self, sin: f64, cos: f64) -> (Self, Self) {
        let d2 = self.d * self.d;
        (
            Jet { v: sin, d: cos * self.d, dd: cos * self.dd - sin * d2 },
            Jet { v: cos, d: -sin * self.d, dd: -sin * self.dd - cos * d2 },
        )
    }
    #[inline(always)]
    fn sqrt(self) -> Self {
        let r = math::sqrt(self.v);
        let d = self.d / (2.0 * r);
        Jet { v: r, d, dd: (self.dd - 2.0 * d * d) / (2.0 * r) }
    }
    #[inline(always)]
    fn recip(self) -> Self {
        let r = 1.0 / self.v;
        let d = -self.d * r * r;
        Jet { v: r, d, dd: (2.0 * self.d * self.d * r - self.dd) * r * r }
    }
}

/// `Σ c_k t^k` by Horner's rule.
#[inline(always)]
fn polynomial<T: Number>(coefficients: &[f64], t: T) -> T {
    coefficients.iter().rev().fold(T::constant(0.0), |acc, &c| acc * t + T::constant(c))
}

/// The largest multiplier of each fundamental argument in the tables.
const MAX_MULTIPLIER: usize = {
    let mut largest = 0;
    let mut j = 0;
    while j < FREQUENCIES.len() {
        let mut k = 0;
        while k < 14 {
            let m = FREQUENCIES[j][k].unsigned_abs() as usize;
            if m > largest {
                largest = m;
            }
            k += 1;
        }
        j += 1;
    }
    largest
};

/// The fourteen fundamental arguments (rad) at `t` Julian centuries of TT (IERS Conventions
/// 2010, eqs. 5.43 and 5.44; from memory, checked against the reference library).
fn fundamental_arguments<T: Number>(t: T) -> [T; 14] {
    // Delaunay arguments l, l', F, D, Ω (arcsec), reduced to one turn before scaling.
    const DELAUNAY: [[f64; 5]; 5] = [
        [485_868.249_036, 1_717_915_923.217_8, 31.879_2, 0.051_635, -0.000_244_70],
        [1_287_104.793_05, 129_596_581.048_1, -0.553_2, 0.000_136, -0.000_011_49],
        [335_779.526_232, 1_739_527_262.847_8, -12.751_2, -0.001_037, 0.000_004_17],
        [1_072_260.703_69, 1_602_961_601.209_0, -6.370_6, 0.006_593, -0.000_031_69],
        [450_160.398_036, -6_962_890.543_1, 7.472_2, 0.007_702, -0.000_059_39],
    ];
    // Mean longitudes of the planets (rad), Mercury to Neptune.
    const PLANETS: [[f64; 2]; 8] = [
        [4.402_608_842, 2_608.790_314_157_4],
        [3.176_146_697, 1_021.328_554_621_1],
        [1.753_470_314, 628.307_584_999_1],
        [6.203_480_913, 334.061_242_670_0],
        [0.599_546_497, 52.969_096_264_1],
        [0.874_016_757, 21.329_910_496_0],
        [5.481_293_872, 7.478_159_856_7],
        [5.311_886_287, 3.813_303_563_8],
    ];
    let turn = |x: T, whole: f64| x - T::constant(whole * math::floor(x.value() / whole));
    core::array::from_fn(|k| match k {
        0..5 => turn(polynomial(&DELAUNAY[k], t), TURN_ARCSEC).scale(ARCSEC),
        5..13 => turn(polynomial(&PLANETS[k - 5], t), core::f64::consts::TAU),
        // General accumulated precession in longitude.
        _ => polynomial(&[0.0, 0.024_381_75, 0.000_005_386_91], t),
    })
}

/// X, Y and s + XY/2 (rad) of the series at `t` Julian centuries of TT.
fn cip_series<T: Number>(t: T) -> [T; 3] {
    let arguments = fundamental_arguments(t);
    // cos and sin of m·F_k for m = 0 ..= MAX_MULTIPLIER, by complex multiplication.
    let mut multiples = [[(1.0, 0.0); MAX_MULTIPLIER + 1]; 14];
    for (k, row) in multiples.iter_mut().enumerate() {
        let (s, c) = math::sin_cos(arguments[k].value());
        for m in 1..=MAX_MULTIPLIER {
            let (pc, ps) = row[m - 1];
            row[m] = (pc * c - ps * s, pc * s + ps * c);
        }
    }
    // Per series and power of t, in µas.
    let mut sums = [[T::constant(0.0); 5]; 3];
    let mut next = AMPLITUDES.len();
    // The frequencies in reverse, smallest terms first (the amplitudes are grouped by frequency).
    for (j, multipliers) in FREQUENCIES.iter().enumerate().rev() {
        let (mut c, mut s) = (1.0, 0.0);
        let mut phase = T::constant(0.0);
        for (k, &m) in multipliers.iter().enumerate() {
            if m != 0 {
                let (mc, ms) = multiples[k][usize::from(m.unsigned_abs())];
                let ms = if m < 0 { -ms } else { ms };
                (c, s) = (c * mc - s * ms, c * ms + s * mc);
                phase = phase + arguments[k].scale(f64::from(m));
            }
        }
        let (sin, cos) = phase.sin_cos_from(s, c);
        while next > 0 && usize::from(AMPLITUDES[next - 1].0) == j {
            next -= 1;
            let (_, series, power, a_sin, a_cos) = AMPLITUDES[next];
            let slot = &mut sums[usize::from(series)][usize::from(power)];
            *slot = *slot + sin.scale(a_sin) + cos.scale(a_cos);
        }
    }
    let uas = ARCSEC * 1e-6;
    let total = |series: usize| polynomial_of(&sums[series], t);
    [
        polynomial(&X_POLYNOMIAL, t).scale(ARCSEC) + total(0).scale(uas),
        polynomial(&Y_POLYNOMIAL, t).scale(ARCSEC) + total(1).scale(uas),
        polynomial(&S_POLYNOMIAL, t).scale(uas) + total(2).scale(uas),
    ]
}

/// `Σ c_p t^p` with coefficients that are themselves numbers.
#[inline(always)]
fn polynomial_of<T: Number>(coefficients: &[T; 5], t: T) -> T {
    coefficients.iter().rev().fold(T::constant(0.0), |acc, &c| acc * t + c)
}

/// The date as Julian centuries of TT from J2000.0, checked.
fn centuries(tt: JulianDate) -> Result<f64> {
    let tt = JulianDate::new(tt.jd, tt.fraction)
        .map_err(|e| e.with_quantity(if e.quantity() == "jd" { "jd_tt" } else { "jd_tt_fraction" }))?;
    let t = ((tt.jd - super::rotation::J2000_JULIAN_DATE) + tt.fraction) / CENTURY_DAYS;
    if !(-MAX_CENTURIES..=MAX_CENTURIES).contains(&t) {
        let j2000 = super::rotation::J2000_JULIAN_DATE;
        return Err(Error::OutOfRange {
            quantity: "jd_tt",
            value: tt.jd + tt.fraction,
            min: j2000 - MAX_CENTURIES * CENTURY_DAYS,
            max: j2000 + MAX_CENTURIES * CENTURY_DAYS,
        });
    }
    Ok(t)
}

/// The CIP coordinates `X, Y` and the CIO locator `s` (rad) of the IAU 2006/2000A model at the
/// TT date `tt` (without observed pole offsets).
///
/// # Errors
/// As [`JulianDate::new`] naming `jd_tt` or `jd_tt_fraction`; [`Error::OutOfRange`] naming
/// `jd_tt` more than ten centuries from J2000.0.
///
/// ```
/// use rotaframe::earth::celestial::cip_coordinates;
/// use rotaframe::time::JulianDate;
/// // At J2000.0 the CIP is 0.0166″ from the GCRS pole in x (IERS Conventions 2010, eq. 5.16's
/// // constant term, plus nutation of a few arcseconds).
/// let c = cip_coordinates(JulianDate::new(2_451_545.0, 0.0).unwrap()).unwrap();
/// assert!(c.x.abs() < 1e-4 && c.y.abs() < 1e-4 && c.s.abs() < 1e-7);
/// ```
pub fn cip_coordinates(tt: JulianDate) -> Result<CipCoordinates> {
    let t = centuries(tt)?;
    let [x, y, s_plus] = cip_series(t);
    Ok(CipCoordinates { x, y, s: s_plus - 0.5 * x * y })
}

/// The TIO locator `s′` (rad) at the TT date `tt`: −47 µas per century (IERS Conventions 2010,
/// eq. 5.13).
///
/// # Errors
/// As [`cip_coordinates`].
pub fn tio_locator(tt: JulianDate) -> Result<f64> {
    Ok(TIO_RATE * centuries(tt)?)
}

/// Checks the pole coordinates (within 10″, finite).
fn check_pole(pole: &PoleCoordinates) -> Result<()> {
    for (value, quantity) in [(pole.xp, "xp"), (pole.yp, "yp"), (pole.dx, "dx"), (pole.dy, "dy")] {
        crate::limits::check_scalar(value, MAX_POLE, "rad", quantity)?;
    }
    Ok(())
}

/// `R1(θ)`, `R2(θ)`, `R3(θ)`: rotations of the axes about x, y, z, as 3×3 arrays of numbers.
fn axis_rotation<T: Number>(axis: usize, sin: T, cos: T) -> [[T; 3]; 3] {
    let (one, zero) = (T::constant(1.0), T::constant(0.0));
    match axis {
        0 => [[one, zero, zero], [zero, cos, sin], [zero, -sin, cos]],
        1 => [[cos, zero, -sin], [zero, one, zero], [sin, zero, cos]],
        _ => [[cos, sin, zero], [-sin, cos, zero], [zero, zero, one]],
    }
}

fn product<T: Number>(a: &[[T; 3]; 3], b: &[[T; 3]; 3]) -> [[T; 3]; 3] {
    core::array::from_fn(|i| core::array::from_fn(|j| a[i][0] * b[0][j] + a[i][1] * b[1][j] + a[i][2] * b[2][j]))
}

/// `R_k(angle)` with the angle's sine and cosine carried through.
fn rotation_by<T: Number>(axis: usize, angle: T) -> [[T; 3]; 3] {
    let (s, c) = math::sin_cos(angle.value());
    let (sin, cos) = angle.sin_cos_from(s, c);
    axis_rotation(axis, sin, cos)
}

/// The rotation `C = Q R W` that maps ITRS coordinates to GCRS coordinates (eq. 5.1), from
/// `X, Y` (with the offsets), `s`, the Earth Rotation Angle `era`, `xp`, `yp` and `s′`.
fn itrs_to_gcrs<T: Number>(x: T, y: T, s: T, era: T, xp: T, yp: T, s_prime: T) -> [[T; 3]; 3] {
    let one = T::constant(1.0);
    let r2 = x * x + y * y;
    let a = (one + (one - r2).sqrt()).recip();
    let p = [[one - a * x * x, -(a * x * y), x], [-(a * x * y), one - a * y * y, y], [-x, -y, one - a * r2]];
    let q = product(&p, &rotation_by(2, s));
    let r = rotation_by(2, -era);
    let w = product(&product(&rotation_by(2, -s_prime), &rotation_by(1, xp)), &rotation_by(0, yp));
    product(&product(&q, &r), &w)
}

fn values(m: &[[f64; 3]; 3]) -> Matrix3<f64> {
    Matrix3::from_fn(|i, j| m[i][j])
}

/// The matrix that maps GCRS coordinates to ITRS coordinates at TT date `tt` and UT1 date `ut1`
/// with polar motion and celestial pole offsets `pole` (IERS Conventions 2010, eq. 5.1,
/// transposed). See the [module documentation](self).
///
/// # Errors
/// As [`cip_coordinates`]; as [`earth_rotation_angle`](super::earth_rotation_angle) naming
/// `jd_ut1` or `jd_ut1_fraction`; [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `xp`,
/// `yp`, `dx` or `dy` (beyond 10″).
///
/// ```
/// use rotaframe::earth::celestial::{celestial_to_terrestrial, PoleCoordinates};
/// use rotaframe::time::JulianDate;
/// let tt = JulianDate::new(2_460_000.5, 0.25).unwrap();
/// let ut1 = JulianDate::new(2_460_000.5, 0.25 - 69.2 / 86_400.0).unwrap(); // TT − UT1 ≈ 69 s in 2023
/// let m = celestial_to_terrestrial(tt, ut1, &PoleCoordinates::default()).unwrap();
/// assert!((m * m.transpose() - nalgebra::Matrix3::identity()).amax() < 1e-15);
/// ```
pub fn celestial_to_terrestrial(tt: JulianDate, ut1: JulianDate, pole: &PoleCoordinates) -> Result<Matrix3<f64>> {
    check_pole(pole)?;
    let t = centuries(tt)?;
    let era = super::earth_rotation_angle(ut1.jd, ut1.fraction)?;
    let [x, y, s_plus] = cip_series(t);
    let s = s_plus - 0.5 * x * y;
    Ok(values(&itrs_to_gcrs(x + pole.dx, y + pole.dy, s, era, pole.xp, pole.yp, TIO_RATE * t)).transpose())
}

/// The motion of ITRS relative to GCRS at the TT date `tt`, with `UT1 − UTC`, polar motion and
/// the celestial pole offsets from `eop` (interpolated with their rates; `dX, dY` are zero
/// where the table does not give them): the rotation (ITRS coordinates to GCRS coordinates),
/// the angular velocity and the angular acceleration (per second of TT, resolved in GCRS);
/// the origins coincide. See the [module documentation](self).
///
/// # Errors
/// As [`cip_coordinates`]; [`Error::OutOfRange`] naming `jd` for a date outside `eop`'s table
/// or UTC before 1972.
///
/// ```
/// use rotaframe::earth::celestial::itrs_motion;
/// use rotaframe::time::{EarthOrientationRows, EarthOrientationView, JulianDate, LeapSeconds};
/// // Invented Earth orientation rows around the date.
/// let mjd = [59_999.0, 60_000.0, 60_001.0, 60_002.0];
/// let dut1 = [-0.0188, -0.0192, -0.0196, -0.0200];
/// let (xp, yp) = ([5e-7; 4], [1.5e-6; 4]);
/// let rows = EarthOrientationRows { mjd: &mjd, ut1_minus_utc: &dut1, xp: &xp, yp: &yp, dx: &[], dy: &[] };
/// let eop = EarthOrientationView::new(rows, &LeapSeconds::BUILT_IN).unwrap();
/// let m = itrs_motion(JulianDate::new(2_460_000.5, 0.5).unwrap(), &eop).unwrap();
/// // The Earth turns at the ERA's rate plus the precession-nutation rate (about 50″ a year).
/// assert!((m.angular_velocity().norm() - 7.292115146706979e-5).abs() < 1e-11);
/// ```
pub fn itrs_motion(tt: JulianDate, eop: &EarthOrientationView<'_>) -> Result<FrameMotion<Gcrs, Itrs>> {
    let t = centuries(tt)?;
    let leaps = eop.leap_seconds();
    let utc = crate::time::convert_time(tt, TimeScale::Tt, TimeScale::Utc, leaps, None)?;
    let [value, rate, acceleration] = eop.at_with_rates(utc)?;
    let ut1 = crate::time::convert_time(utc, TimeScale::Utc, TimeScale::Ut1, leaps, Some(eop))?;
    let era = super::earth_rotation_angle(ut1.jd, ut1.fraction)?;
    // Derivatives per second of TT (TT, TAI and UTC advance together between leap seconds).
    let per_century = 1.0 / (CENTURY_DAYS * 86_400.0);
    let tj = Jet { v: t, d: per_century, dd: 0.0 };
    let [x, y, s_plus] = cip_series(tj);
    let s = s_plus - (x * y).scale(0.5);
    let jet = |v: f64, d: f64, dd: f64| Jet { v, d, dd };
    let era = jet(era, super::ERA_RATE * (1.0 + rate.ut1_minus_utc), super::ERA_RATE * acceleration.ut1_minus_utc);
    let offset = |v: Option<f64>, d: Option<f64>, dd: Option<f64>| jet(v.unwrap_or(0.0), d.unwrap_or(0.0), dd.unwrap_or(0.0));
    let (dx, dy) = (offset(value.dx, rate.dx, acceleration.dx), offset(value.dy, rate.dy, acceleration.dy));
    let xp = jet(value.xp, rate.xp, acceleration.xp);
    let yp = jet(value.yp, rate.yp, acceleration.yp);
    let s_prime = tj.scale(TIO_RATE);
    let c = itrs_to_gcrs(x + dx, y + dy, s, era, xp, yp, s_prime);
    let part = |f: fn(&Jet) -> f64| Matrix3::from_fn(|i, j| f(&c[i][j]));
    let (c0, c1, c2) = (part(|j| j.v), part(|j| j.d), part(|j| j.dd));
    let vee = |m: Matrix3<f64>| Vector3::new(m[(2, 1)] - m[(1, 2)], m[(0, 2)] - m[(2, 0)], m[(1, 0)] - m[(0, 1)]) * 0.5;
    let angular_velocity = vee(c1 * c0.transpose());
    let angular_acceleration = vee(c2 * c0.transpose() + c1 * c1.transpose());
    let rotation = UnitQuaternion::from_rotation_matrix(&Rotation3::from_matrix_unchecked(c0));
    FrameMotion::from_parts(MotionParts { rotation, angular_velocity, angular_acceleration, ..MotionParts::default() })
}
