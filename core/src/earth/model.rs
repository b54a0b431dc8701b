//! Reference ellipsoids with their normal gravity fields.
//!
//! An [`EarthModel`] is a level ellipsoid: a rotating ellipsoid of revolution whose surface is
//! an equipotential of its own normal gravity field. Four defining constants fix it: the
//! semi-major axis `a`, the flattening `f`, the geocentric gravitational constant `GM` and the
//! rotation rate `ω`. Everything else follows:
//!
//! ```text
//! b   = a (1 − f)                       semi-minor axis
//! e²  = f (2 − f)                       first eccentricity squared
//! e′² = e² / (1 − e²)                   second eccentricity squared
//! m   = ω² a² b / GM
//! q₀  = ½ [(1 + 3/e′²) atan e′ − 3/e′]
//! q₀′ = 3 (1 + 1/e′²) (1 − atan(e′)/e′) − 1
//! γe  = GM/(a b) · [1 − m − (m/6) e′ q₀′/q₀]      normal gravity at the equator
//! γp  = GM/a² · [1 + (m/3) e′ q₀′/q₀]             normal gravity at the poles
//! J₂  = (e²/3) · [1 − (2/15) m e′/q₀]              dynamical form factor
//! k   = b γp / (a γe) − 1                          Somigliana's constant
//! ```
//!
//! (H. Moritz, "Geodetic Reference System 1980", *Journal of Geodesy* 74 (2000) 128–133, and
//! W. A. Heiskanen & H. Moritz, *Physical Geodesy* (1967), ch. 2.) The presets store the
//! published values of γe, γp and J₂; [`EarthModel::from_defining_constants`] derives them with
//! the formulas above, and the tests check that the two agree.
//!
//! Presets:
//! * [`WGS84`]: NIMA TR8350.2, 3rd ed. (1997, Amendment 1 of 2000), Tables 3.1–3.4.
//! * [`GRS80`]: Moritz (2000).

use crate::error::{Error, Result, ensure_finite1};
use crate::math;

/// A level ellipsoid: geometry, mass, rotation and normal gravity. See the
/// [module documentation](self).
///
/// ```
/// use rotaframe::earth::WGS84;
/// assert_eq!(WGS84.semi_major_axis(), 6378137.0);
/// assert!((WGS84.semi_minor_axis() - 6356752.3142).abs() < 1e-4);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EarthModel {
    a: f64,
    f: f64,
    gm: f64,
    omega: f64,
    gamma_equator: f64,
    gamma_pole: f64,
    j2: f64,
    // Derived by multiplications only (e′² and m, one division each, are computed when asked),
    // so that building a model from its constants, as the C interface does per call, is cheap.
    b: f64,
    e2: f64,
    k: f64,
}

/// WGS 84 (NIMA TR8350.2, 3rd ed., Amendment 1, 2000): `a` = 6378137 m,
/// `1/f` = 298.257223563, `GM` = 3.986004418e14 m³/s² (atmosphere included),
/// `ω` = 7.292115e-5 rad/s; normal gravity γe = 9.7803253359 m/s², γp = 9.8321849378 m/s²
/// (Table 3.4); `J₂` = −√5 · C̄₂,₀ with the ellipsoid's C̄₂,₀ = −0.484166774985e-3.
/// Somigliana's constant is the published k = 0.00193185265241 (TR8350.2, ch. 4), computed
/// there from the unrounded γe and γp.
pub const WGS84: EarthModel = EarthModel::from_published(
    6_378_137.0,
    1.0 / 298.257_223_563,
    3.986_004_418e14,
    7.292_115e-5,
    9.780_325_335_9,
    9.832_184_937_8,
    1.082_629_821_313_3e-3,
    0.001_931_852_652_41,
);

/// GRS 80 (H. Moritz, *Journal of Geodesy* 74, 2000): `a` = 6378137 m, `GM` = 3.986005e14 m³/s²,
/// `J₂` = 1.08263e-3 (defining), `ω` = 7.292115e-5 rad/s; derived `1/f` = 298.257222101,
/// γe = 9.7803267715 m/s², γp = 9.8321863685 m/s², k = 0.001931851353.
pub const GRS80: EarthModel = EarthModel::from_published(
    6_378_137.0,
    1.0 / 298.257_222_101,
    3.986_005e14,
    7.292_115e-5,
    9.780_326_771_5,
    9.832_186_368_5,
    1.082_63e-3,
    0.001_931_851_353,
);

/// The constants that fix an [`EarthModel`]: the four defining ones, the normal-gravity values
/// and `J₂`, and Somigliana's `k` (stored rather than recomputed, so that presets with a
/// published `k` survive a round trip through this plain form exactly). For bindings and
/// serialisation; `#[repr(C)]` so that a C struct with the same fields can be read in place.
///
/// ```
/// use rotaframe::earth::{EarthModel, WGS84};
/// let c = WGS84.constants();
/// assert_eq!(EarthModel::from_constants(&c).unwrap(), WGS84);
/// ```
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EarthModelConstants {
    /// Semi-major axis `a` (m).
    pub semi_major_axis: f64,
    /// Flattening `f`.
    pub flattening: f64,
    /// Geocentric gravitational constant (m³/s²).
    pub gm: f64,
    /// Rotation rate (rad/s).
    pub rotation_rate: f64,
    /// Normal gravity at the equator (m/s²).
    pub gamma_equator: f64,
    /// Normal gravity at the poles (m/s²).
    pub gamma_pole: f64,
    /// Dynamical form factor.
    pub j2: f64,
    /// Somigliana's constant.
    pub somigliana_k: f64,
}

/// Largest flattening a custom model may have. The geodetic inversion is verified for Earth-like
/// flattening and, by property tests, up to this value.
pub const MAX_FLATTENING: f64 = 0.1;

/// Smallest semi-major axis a custom model may have (m): a body of planetary size (a large
/// asteroid). With [`MAX_SEMI_MAJOR_AXIS`] it keeps every derived length and every product
/// formed by the geodetic and gravity code finite.
pub const MIN_SEMI_MAJOR_AXIS: f64 = 1.0e5;
/// Largest semi-major axis a custom model may have (m): larger than Jupiter's (7.1e7 m).
pub const MAX_SEMI_MAJOR_AXIS: f64 = 1.0e8;
/// Largest geocentric gravitational constant a custom model may have (m³/s²; Jupiter's is
/// 1.27e17).
pub const MAX_GM: f64 = 1.0e18;
/// Largest ratio `m = ω² a² b / GM` of centrifugal to gravitational acceleration at the equator
/// a model may have (Earth 0.00345, Jupiter about 0.09). Beyond it the level-ellipsoid formulas
/// stop describing a body held together by its own gravity.
pub const MAX_GRAVITY_RATIO_M: f64 = 0.2;
/// Relative tolerance within which given normal-gravity constants (γe, γp) must agree with
/// those of the level ellipsoid of the same `a`, `f`, `GM` and `ω` ([`EarthModel::custom`]).
/// Published ellipsoids agree to about 1e-10; the tolerance leaves room for rounded constants
/// but refuses a set that describes a different body.
pub const GRAVITY_CONSISTENCY: f64 = 1.0e-3;
/// Relative tolerance within which a given `J₂` must agree with the level ellipsoid's.
pub const J2_CONSISTENCY: f64 = 1.0e-2;
/// Smallest flattening for which [`EarthModel::custom`] checks γe, γp and `J₂` against the
/// level ellipsoid (the closed formulas lose accuracy as `f` → 0; below it only positivity and
/// [`MAX_GRAVITY_RATIO_M`] are checked).
pub const CONSISTENCY_MIN_FLATTENING: f64 = 1.0e-4;

impl EarthModel {
    /// A model from published constants, deriving only what needs no square root (so that
    /// presets can be constants). Not validated.
    #[allow(clippy::too_many_arguments)]
    const fn from_published(a: f64, f: f64, gm: f64, omega: f64, gamma_equator: f64, gamma_pole: f64, j2: f64, k: f64) -> Self {
        let b = a * (1.0 - f);
        let e2 = f * (2.0 - f);
        Self { a, f, gm, omega, gamma_equator, gamma_pole, j2, b, e2, k }
    }

    /// A level ellipsoid from its four defining constants, with γe, γp and `J₂` derived by the
    /// closed formulas in the [module documentation](self).
    ///
    /// # Errors
    /// [`Error::NonFinite`], [`Error::NotPositive`] or [`Error::OutOfRange`] naming the constant
    /// (`semi_major_axis` in [[`MIN_SEMI_MAJOR_AXIS`], [`MAX_SEMI_MAJOR_AXIS`]], `flattening` in
    /// [[`CONSISTENCY_MIN_FLATTENING`], [`MAX_FLATTENING`]] (the closed formulas lose accuracy
    /// for flatter bodies; give a near-sphere's constants to [`custom`](Self::custom)), `gm` in
    /// (0, [`MAX_GM`]], `rotation_rate` ≥ 0 with `m = ω²a²b/GM` at most
    /// [`MAX_GRAVITY_RATIO_M`]); [`Error::Invalid`] naming `gamma_equator` or `gamma_pole` if
    /// the level ellipsoid has no positive normal gravity.
    ///
    /// # Example
    /// ```
    /// use approx::assert_relative_eq;
    /// use rotaframe::earth::{EarthModel, WGS84};
    /// let m = EarthModel::from_defining_constants(6378137.0, 1.0 / 298.257223563, 3.986004418e14, 7.292115e-5).unwrap();
    /// assert_relative_eq!(m.gamma_equator(), WGS84.gamma_equator(), max_relative = 1e-10);
    /// ```
    pub fn from_defining_constants(semi_major_axis: f64, flattening: f64, gm: f64, rotation_rate: f64) -> Result<Self> {
        validate_geometry(semi_major_axis, flattening, gm, rotation_rate)?;
        if flattening < CONSISTENCY_MIN_FLATTENING {
            return Err(Error::OutOfRange {
                quantity: "flattening",
                value: flattening,
                min: CONSISTENCY_MIN_FLATTENING,
                max: MAX_FLATTENING,
            });
        }
        let (gamma_equator, gamma_pole, j2) = level_ellipsoid_gravity(semi_major_axis, flattening, gm, rotation_rate);
        positive_gravity(gamma_equator, "gamma_equator")?;
        positive_gravity(gamma_pole, "gamma_pole")?;
        let (a, f) = (semi_major_axis, flattening);
        let b = a * (1.0 - f);
        let k = b * gamma_pole / (a * gamma_equator) - 1.0;
        Ok(Self::from_published(a, f, gm, rotation_rate, gamma_equator, gamma_pole, j2, k))
    }

    /// A model with every constant given, for ellipsoids whose gravity constants are published
    /// separately. Checks ranges, that the gravity constants are positive, finite and within a
    /// factor of two of `GM/a²` (`|J₂|` < 0.1), and (for flattening of at least [`CONSISTENCY_MIN_FLATTENING`]) that γe and γp agree with the
    /// level ellipsoid of the same `a`, `f`, `GM`, `ω` within [`GRAVITY_CONSISTENCY`] and `J₂`
    /// within [`J2_CONSISTENCY`] (relative), so that the constants describe one body.
    ///
    /// # Errors
    /// As [`from_defining_constants`](Self::from_defining_constants), and for `gamma_equator`,
    /// `gamma_pole` (positive, consistent) and `j2` (finite, consistent).
    ///
    /// ```
    /// use rotaframe::earth::EarthModel;
    /// let bad = EarthModel::custom(6378137.0, 0.0033, -1.0, 7.29e-5, 9.78, 9.83, 1.08e-3);
    /// assert_eq!(bad.unwrap_err().quantity(), "gm");
    /// ```
    #[allow(clippy::too_many_arguments)]
    pub fn custom(
        semi_major_axis: f64,
        flattening: f64,
        gm: f64,
        rotation_rate: f64,
        gamma_equator: f64,
        gamma_pole: f64,
        j2: f64,
    ) -> Result<Self> {
        validate_geometry(semi_major_axis, flattening, gm, rotation_rate)?;
        positive(gamma_equator, "gamma_equator")?;
        positive(gamma_pole, "gamma_pole")?;
        ensure_finite1(j2, "j2")?;
        let gm_over_a2 = gm / (semi_major_axis * semi_major_axis);
        let (min, max) = (0.5 * gm_over_a2, 2.0 * gm_over_a2);
        if !(min..=max).contains(&gamma_equator) {
            return Err(Error::OutOfRange { quantity: "gamma_equator", value: gamma_equator, min, max });
        }
        if !(min..=max).contains(&gamma_pole) {
            return Err(Error::OutOfRange { quantity: "gamma_pole", value: gamma_pole, min, max });
        }
        if j2.abs() >= 0.1 {
            return Err(Error::OutOfRange { quantity: "j2", value: j2, min: -0.1, max: 0.1 });
        }
        if flattening >= CONSISTENCY_MIN_FLATTENING {
            let (ge, gp, j2_level) = level_ellipsoid_gravity(semi_major_axis, flattening, gm, rotation_rate);
            consistent(gamma_equator, ge, GRAVITY_CONSISTENCY, "gamma_equator")?;
            consistent(gamma_pole, gp, GRAVITY_CONSISTENCY, "gamma_pole")?;
            consistent(j2, j2_level, J2_CONSISTENCY, "j2")?;
        }
        let b = semi_major_axis * (1.0 - flattening);
        let k = b * gamma_pole / (semi_major_axis * gamma_equator) - 1.0;
        Ok(Self::from_published(semi_major_axis, flattening, gm, rotation_rate, gamma_equator, gamma_pole, j2, k))
    }

    /// Why `from_constants` rejected a set of constants (kept out of line: the rare path).
    #[cold]
    #[inline(never)]
    fn rejection(c: &EarthModelConstants) -> Error {
        match Self::custom(c.semi_major_axis, c.flattening, c.gm, c.rotation_rate, c.gamma_equator, c.gamma_pole, c.j2) {
            Err(e) => e,
            Ok(_) => Error::NonFinite { quantity: "somigliana_k" },
        }
    }

    /// Which plausibility check of `from_constants` failed (the rare path).
    #[cold]
    #[inline(never)]
    fn implausible(c: &EarthModelConstants, gm_over_a2: f64, k: f64) -> Error {
        if let Err(e) = check_gravity_ratio(c.semi_major_axis, c.flattening, c.gm, c.rotation_rate) {
            return e;
        }
        let (min, max) = (0.5 * gm_over_a2, 2.0 * gm_over_a2);
        if !(min..=max).contains(&c.gamma_equator) {
            return Error::OutOfRange { quantity: "gamma_equator", value: c.gamma_equator, min, max };
        }
        if !(min..=max).contains(&c.gamma_pole) {
            return Error::OutOfRange { quantity: "gamma_pole", value: c.gamma_pole, min, max };
        }
        if c.j2.abs() >= 0.1 {
            return Error::OutOfRange { quantity: "j2", value: c.j2, min: -0.1, max: 0.1 };
        }
        Error::OutOfRange { quantity: "somigliana_k", value: c.somigliana_k, min: k - 1e-8, max: k + 1e-8 }
    }

    /// The model's constants in plain form.
    #[must_use]
    pub const fn constants(&self) -> EarthModelConstants {
        EarthModelConstants {
            semi_major_axis: self.a,
            flattening: self.f,
            gm: self.gm,
            rotation_rate: self.omega,
            gamma_equator: self.gamma_equator,
            gamma_pole: self.gamma_pole,
            j2: self.j2,
            somigliana_k: self.k,
        }
    }

    /// A model from its constants in plain form, validated as in [`custom`](Self::custom)
    /// and with `somigliana_k` finite. The derived quantities are recomputed by the same
    /// arithmetic as the presets, so `from_constants(&m.constants()) == m`.
    ///
    /// # Errors
    /// As [`custom`](Self::custom), and [`Error::NonFinite`] for `somigliana_k`.
    #[inline]
    pub fn from_constants(c: &EarthModelConstants) -> Result<Self> {
        // Quick acceptance of good constants (the common case, once per C call): a sum of
        // `x · 0` is zero exactly when every constant is finite (written so, the check costs a
        // few instructions; `is_finite` on each compiles to integer bit tests); only a rejected
        // set goes through the checks that name the bad constant.
        let probe = c.semi_major_axis * 0.0
            + c.flattening * 0.0
            + c.gm * 0.0
            + c.rotation_rate * 0.0
            + c.gamma_equator * 0.0
            + c.gamma_pole * 0.0
            + c.j2 * 0.0
            + c.somigliana_k * 0.0;
        let good = probe == 0.0
            && (MIN_SEMI_MAJOR_AXIS..=MAX_SEMI_MAJOR_AXIS).contains(&c.semi_major_axis)
            && c.gm > 0.0
            && c.gm <= MAX_GM
            && c.gamma_equator > 0.0
            && c.gamma_pole > 0.0
            && c.rotation_rate >= 0.0
            && c.flattening >= 0.0
            && c.flattening <= MAX_FLATTENING;
        if !good {
            return Err(Self::rejection(c));
        }
        // Cheap plausibility of the gravity constants (this runs once per C call, so the
        // level-ellipsoid comparison of `custom` is left to the constructors): the ratio m in
        // range, γe and γp within a factor of two of GM/a², |J₂| < 0.1, and Somigliana's k
        // consistent with γe and γp.
        let b = c.semi_major_axis * (1.0 - c.flattening);
        let gm_over_a2 = c.gm / (c.semi_major_axis * c.semi_major_axis);
        let m = c.rotation_rate * c.rotation_rate * c.semi_major_axis * b / gm_over_a2 / c.semi_major_axis;
        let k = b * c.gamma_pole / (c.semi_major_axis * c.gamma_equator) - 1.0;
        let plausible = m <= MAX_GRAVITY_RATIO_M
            && (0.5 * gm_over_a2..=2.0 * gm_over_a2).contains(&c.gamma_equator)
            && (0.5 * gm_over_a2..=2.0 * gm_over_a2).contains(&c.gamma_pole)
            && c.j2.abs() < 0.1
            && (c.somigliana_k - k).abs() <= 1e-8;
        if !plausible {
            return Err(Self::implausible(c, gm_over_a2, k));
        }
        Ok(Self::from_published(
            c.semi_major_axis,
            c.flattening,
            c.gm,
            c.rotation_rate,
            c.gamma_equator,
            c.gamma_pole,
            c.j2,
            c.somigliana_k,
        ))
    }

    /// Semi-major (equatorial) axis `a` (m).
    #[must_use]
    #[inline]
    pub const fn semi_major_axis(&self) -> f64 {
        self.a
    }
    /// Flattening `f = (a − b)/a`.
    #[must_use]
    #[inline]
    pub const fn flattening(&self) -> f64 {
        self.f
    }
    /// Semi-minor (polar) axis `b = a(1 − f)` (m).
    #[must_use]
    #[inline]
    pub const fn semi_minor_axis(&self) -> f64 {
        self.b
    }
    /// First eccentricity squared `e² = f(2 − f)`.
    #[must_use]
    #[inline]
    pub const fn eccentricity_squared(&self) -> f64 {
        self.e2
    }
    /// Second eccentricity squared `e′² = e²/(1 − e²)`.
    #[must_use]
    #[inline]
    pub const fn second_eccentricity_squared(&self) -> f64 {
        self.e2 / (1.0 - self.e2)
    }
    /// Geocentric gravitational constant `GM` (m³/s²).
    #[must_use]
    #[inline]
    pub const fn gm(&self) -> f64 {
        self.gm
    }
    /// Rotation rate `ω` relative to inertial space (rad/s).
    #[must_use]
    #[inline]
    pub const fn rotation_rate(&self) -> f64 {
        self.omega
    }
    /// Normal gravity on the ellipsoid at the equator, γe (m/s²).
    #[must_use]
    #[inline]
    pub const fn gamma_equator(&self) -> f64 {
        self.gamma_equator
    }
    /// Normal gravity on the ellipsoid at the poles, γp (m/s²).
    #[must_use]
    #[inline]
    pub const fn gamma_pole(&self) -> f64 {
        self.gamma_pole
    }
    /// Second-degree zonal harmonic (dynamical form factor) `J₂`.
    #[must_use]
    #[inline]
    pub const fn j2(&self) -> f64 {
        self.j2
    }
    /// Somigliana's constant `k = b γp / (a γe) − 1` (the presets store the published value,
    /// computed from unrounded γe and γp).
    #[must_use]
    #[inline]
    pub const fn somigliana_k(&self) -> f64 {
        self.k
    }
    /// The ratio `m = ω² a² b / GM` of centrifugal to gravitational acceleration at the equator
    /// (approximately).
    #[must_use]
    #[inline]
    pub const fn gravity_ratio_m(&self) -> f64 {
        self.omega * self.omega * self.a * self.a * self.b / self.gm
    }
    /// Radius of the sphere about the Earth's centre inside which geodetic coordinates are not
    /// unique: `(a² − b²)/b`, the larger half-axis of the evolute of the meridian ellipse
    /// (42.8 km for WGS 84). More than one ellipsoidal normal passes through points inside it.
    /// For a near-sphere that region shrinks to the centre, where the conversion is still
    /// singular, so the radius is at least `a/1000`.
    #[must_use]
    #[inline]
    pub fn centre_exclusion_radius(&self) -> f64 {
        ((self.a - self.b) * (self.a + self.b) / self.b).max(1e-3 * self.a)
    }
}

fn positive(value: f64, quantity: &'static str) -> Result<()> {
    ensure_finite1(value, quantity)?;
    if value > 0.0 { Ok(()) } else { Err(Error::NotPositive { quantity, value }) }
}

/// Normal gravity at the equator and pole and `J₂` of the level ellipsoid with these defining
/// constants (the closed formulas of the module documentation; `f` > 0).
fn level_ellipsoid_gravity(a: f64, f: f64, gm: f64, omega: f64) -> (f64, f64, f64) {
    let b = a * (1.0 - f);
    let e2 = f * (2.0 - f);
    let ep = math::sqrt(e2 / (1.0 - e2));
    let atan_ep = math::atan(ep);
    let q0 = 0.5 * ((1.0 + 3.0 / (ep * ep)) * atan_ep - 3.0 / ep);
    let q0p = 3.0 * (1.0 + 1.0 / (ep * ep)) * (1.0 - atan_ep / ep) - 1.0;
    let m = omega * omega * a * a * b / gm;
    let gamma_equator = gm / (a * b) * (1.0 - m - m / 6.0 * ep * q0p / q0);
    let gamma_pole = gm / (a * a) * (1.0 + m / 3.0 * ep * q0p / q0);
    let j2 = e2 / 3.0 * (1.0 - 2.0 / 15.0 * m * ep / q0);
    (gamma_equator, gamma_pole, j2)
}

/// A derived normal gravity must be positive (it is not when the body spins too fast).
fn positive_gravity(value: f64, quantity: &'static str) -> Result<()> {
    if value > 0.0 && value.is_finite() {
        Ok(())
    } else {
        Err(Error::Invalid {
            quantity,
            reason: "the level ellipsoid of these constants has no positive normal gravity (the body spins too fast)",
        })
    }
}

/// `given` within relative `tolerance` of `level`, naming `quantity`.
fn consistent(given: f64, level: f64, tolerance: f64, quantity: &'static str) -> Result<()> {
    let slack = tolerance * level.abs();
    if (given - level).abs() <= slack {
        Ok(())
    } else {
        Err(Error::OutOfRange { quantity, value: given, min: level - slack, max: level + slack })
    }
}

/// The ratio `m = ω² a² b / GM` within [0, [`MAX_GRAVITY_RATIO_M`]], reported against the
/// rotation rate (the constant that usually carries the mistake).
fn check_gravity_ratio(a: f64, f: f64, gm: f64, omega: f64) -> Result<()> {
    let b = a * (1.0 - f);
    let m = omega * omega * a * a * b / gm;
    if m <= MAX_GRAVITY_RATIO_M {
        return Ok(());
    }
    Err(Error::OutOfRange {
        quantity: "rotation_rate",
        value: omega,
        min: 0.0,
        max: math::sqrt(MAX_GRAVITY_RATIO_M * gm / (a * a * b)),
    })
}

fn validate_geometry(a: f64, f: f64, gm: f64, omega: f64) -> Result<()> {
    ensure_finite1(a, "semi_major_axis")?;
    if !(MIN_SEMI_MAJOR_AXIS..=MAX_SEMI_MAJOR_AXIS).contains(&a) {
        return Err(Error::OutOfRange {
            quantity: "semi_major_axis",
            value: a,
            min: MIN_SEMI_MAJOR_AXIS,
            max: MAX_SEMI_MAJOR_AXIS,
        });
    }
    ensure_finite1(f, "flattening")?;
    if !(0.0..=MAX_FLATTENING).contains(&f) {
        return Err(Error::OutOfRange { quantity: "flattening", value: f, min: 0.0, max: MAX_FLATTENING });
    }
    positive(gm, "gm")?;
    if gm > MAX_GM {
        return Err(Error::OutOfRange { quantity: "gm", value: gm, min: 0.0, max: MAX_GM });
    }
    ensure_finite1(omega, "rotation_rate")?;
    if omega < 0.0 {
        return Err(Error::OutOfRange { quantity: "rotation_rate", value: omega, min: 0.0, max: f64::INFINITY });
    }
    check_gravity_ratio(a, f, gm, omega)
}
