//! Geodetic coordinates (latitude, longitude, ellipsoidal height) and their conversion to and
//! from Earth-centred Earth-fixed (ECEF) Cartesian coordinates.
//!
//! # Conventions
//!
//! * **Latitude** φ is geodetic (the angle between the ellipsoidal normal and the equatorial
//!   plane), radians, in [−π/2, π/2], positive north.
//! * **Longitude** λ is radians east of the reference meridian. Any finite value is accepted on
//!   input; results are in (−π, π]. On the polar axis (x = y = 0) longitude is undefined and
//!   rotaframe returns 0.
//! * **Height** h is ellipsoidal: the distance along the normal from the ellipsoid, positive
//!   outside it (above the surface), in metres. It is not height above mean sea level (that
//!   needs a geoid model).
//!
//! # Forward
//!
//! With the prime-vertical radius `N = a / √(1 − e² sin²φ)`:
//!
//! ```text
//! x = (N + h) cos φ cos λ
//! y = (N + h) cos φ sin λ
//! z = (N (1 − e²) + h) sin φ
//! ```
//!
//! (NIMA TR8350.2, eq. 4-14; IOGP Guidance Note 7-2, method 9602.)
//!
//! # Inverse
//!
//! Bowring's method (B. R. Bowring, "Transformation from spatial to geographical coordinates",
//! *Survey Review* 23 (1976) 323–327) written without trigonometric functions in the loop.
//! With `p = √(x² + y²)` and the parametric (reduced) latitude β, `tan β = (1 − f) tan φ`:
//!
//! ```text
//! tan φ = (z + e′² b sin³β) / (p − e² a cos³β)
//! ```
//!
//! Starting from `tan β₀ = a z / (b p)` (close to the answer everywhere outside the Earth's
//! core), two updates of β reach the rounding floor of f64 for every height from −10 km to
//! beyond 40,000 km when f ≤ 0.01, three when f ≤ 0.1 (the tests measure this). The height then comes from
//! the well-conditioned projection on the normal
//!
//! ```text
//! h = p cos φ + z sin φ − a √(1 − e² sin²φ)
//! ```
//!
//! evaluated with fused multiply-adds so that its rounding error stays far below a nanometre.
//!
//! Inside a sphere of radius `(a² − b²)/b` about the centre (42.8 km for WGS 84; see
//! [`EarthModel::centre_exclusion_radius`]) more than one ellipsoidal normal passes through a
//! point, so geodetic coordinates are not unique; the inverse returns
//! [`Error::NearEarthCentre`] there.

use nalgebra::Vector3;

use super::model::EarthModel;
use crate::dd::{Dd, SIN_COS_DD_LIMIT, atan2_dd, sin_cos_dd};
use crate::error::{BatchError, Error, Result, ensure_finite};
use crate::limits;
use crate::math;

/// A geodetic position: latitude and longitude in radians, ellipsoidal height in metres.
/// See the [module documentation](self) for the conventions.
///
/// ```
/// use rotaframe::earth::Geodetic;
/// let summit = Geodetic::from_degrees(46.5575, 7.9739, 4158.0);
/// assert!((summit.latitude - 0.8126).abs() < 1e-4);
/// ```
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Geodetic {
    /// Geodetic latitude (rad), in [−π/2, π/2], positive north.
    pub latitude: f64,
    /// Longitude (rad), positive east.
    pub longitude: f64,
    /// Ellipsoidal height (m), positive above the ellipsoid.
    pub height: f64,
}

impl Geodetic {
    /// A position from radians and metres (not validated; see [`validate`](Self::validate)).
    #[must_use]
    pub const fn new(latitude: f64, longitude: f64, height: f64) -> Self {
        Self { latitude, longitude, height }
    }

    /// A position from degrees and metres.
    #[must_use]
    pub fn from_degrees(latitude_deg: f64, longitude_deg: f64, height: f64) -> Self {
        Self::new(latitude_deg.to_radians(), longitude_deg.to_radians(), height)
    }

    /// Checks that every part is finite and the latitude is in [−π/2, π/2].
    ///
    /// # Errors
    /// [`Error::NonFinite`] or [`Error::OutOfRange`] naming `latitude`, `longitude` or `height`.
    pub fn validate(&self) -> Result<()> {
        // Branch-free acceptance of good input; only rejected input is examined to name it.
        if self.latitude.abs() <= core::f64::consts::FRAC_PI_2 && self.longitude * 0.0 + self.height * 0.0 == 0.0 {
            return Ok(());
        }
        ensure_finite(&[self.latitude], "latitude")?;
        ensure_finite(&[self.longitude], "longitude")?;
        ensure_finite(&[self.height], "height")?;
        check_latitude(self.latitude, "latitude")
    }
}

impl Geodetic {
    /// Checks the position as [`validate`](Self::validate) does and its height against the
    /// supported range for `model` ([`limits::min_height`] to [`limits::max_height`]).
    ///
    /// # Errors
    /// As [`validate`](Self::validate), and [`Error::OutOfRange`] naming `height`.
    ///
    /// ```
    /// use rotaframe::earth::{Geodetic, WGS84};
    /// assert!(Geodetic::new(0.8, 0.1, -7.0e6).validate_for(&WGS84).is_err()); // 7000 km down
    /// ```
    #[inline]
    pub fn validate_for(&self, model: &EarthModel) -> Result<()> {
        // Branch-free acceptance of good input; only rejected input is examined to name it.
        let heights = limits::min_height(model)..=limits::max_height(model);
        if (self.latitude.abs() <= core::f64::consts::FRAC_PI_2) & (self.longitude * 0.0 == 0.0) & heights.contains(&self.height)
        {
            return Ok(());
        }
        self.validate()?;
        limits::check_height(model, self.height, "height")
    }
}

/// Checks that a latitude in radians lies in [−π/2, π/2], naming `quantity`.
pub(crate) fn check_latitude(latitude: f64, quantity: &'static str) -> Result<()> {
    use core::f64::consts::FRAC_PI_2;
    ensure_finite(&[latitude], quantity)?;
    if latitude.abs() <= FRAC_PI_2 {
        Ok(())
    } else {
        Err(Error::OutOfRange { quantity, value: latitude, min: -FRAC_PI_2, max: FRAC_PI_2 })
    }
}

/// Forward conversion for validated input with |longitude| ≤ [`SIN_COS_DD_LIMIT`]: ECEF
/// coordinates (m) of a geodetic position.
///
/// Sines and cosines come from the table-driven double-double [`sin_cos_dd`] and the
/// arithmetic after them is carried in double-double, so the result is the exact value
/// rounded once (to within a few 1e-19 relative).
#[inline(always)]
fn forward(model: &EarthModel, latitude: f64, longitude: f64, height: f64) -> [f64; 3] {
    let (sin_lat, cos_lat) = sin_cos_dd(latitude);
    let (sin_lon, cos_lon) = sin_cos_dd(longitude);
    let e2 = model.eccentricity_squared();
    let w = Dd::sum(1.0, -(e2 * sin_lat.hi * sin_lat.hi)).sqrt();
    let n = Dd::from_f64(model.semi_major_axis()).div(w);
    let horizontal = n.add_f64(height).mul(cos_lat);
    let vertical = n.mul(Dd::sum(1.0, -e2)).add_f64(height).mul(sin_lat);
    [horizontal.mul(cos_lon).to_f64(), horizontal.mul(sin_lon).to_f64(), vertical.to_f64()]
}

/// The forward conversion for any finite longitude: arguments beyond the reduction range of
/// [`sin_cos_dd`] are first brought into (−π, π] by an exact remainder (such longitudes carry
/// less than 1e-10 rad of precision in an f64 anyway).
#[inline(always)]
fn forward_any(model: &EarthModel, latitude: f64, longitude: f64, height: f64) -> [f64; 3] {
    let lon = if longitude.abs() <= SIN_COS_DD_LIMIT { longitude } else { wrap_longitude(longitude) };
    forward(model, latitude, lon, height)
}

crate::fast_twin!(fn forward_any_fast(model: &EarthModel, latitude: f64, longitude: f64, height: f64) -> [f64; 3] = forward_any);
crate::fast_twin!(fn inverse_any_fast(model: &EarthModel, x: f64, y: f64, z: f64) -> [f64; 3] = inverse_any);

/// `x` reduced modulo 2π (as an f64) into about (−π, π].
fn wrap_longitude(x: f64) -> f64 {
    use core::f64::consts::{PI, TAU};
    let r = x % TAU; // exact remainder by the f64 nearest 2π
    if r > PI {
        r - TAU
    } else if r <= -PI {
        r + TAU
    } else {
        r
    }
}

/// Inverse conversion for validated input (finite, outside the centre exclusion sphere).
///
/// Bowring's iteration runs in f64 on the parametric latitude; the quantities that fix the
/// result to the last bit (the distance from the axis, the numerator and denominator of
/// tan φ, and the projection for the height) are carried in double-double.
#[inline(always)]
fn inverse<const STEPS: usize>(model: &EarthModel, x: f64, y: f64, z: f64) -> [f64; 3] {
    let a = model.semi_major_axis();
    let b = model.semi_minor_axis();
    let e2 = model.eccentricity_squared();
    let ep2b = model.second_eccentricity_squared() * b;
    let e2a = e2 * a;
    let one_minus_f = 1.0 - model.flattening();
    let p = Dd::prod(x, x).add(Dd::prod(y, y)).sqrt();
    // Parametric latitude as a (cos, sin) pair, normalised: tan β₀ = a z / (b p).
    let (mut cb, mut sb) = normalise(b * p.hi, a * z);
    for _ in 0..STEPS - 1 {
        let num = z + ep2b * sb * sb * sb;
        let den = p.hi - e2a * cb * cb * cb;
        (cb, sb) = normalise(den, one_minus_f * num);
    }
    let num = Dd::sum(z, ep2b * sb * sb * sb);
    let den = p.add_f64(-(e2a * cb * cb * cb));
    // atan2 of a double-double ratio: the double-double angle of the high parts plus the
    // first-order effect of the low parts.
    let angle = atan2_dd(num.hi, den.hi);
    let latitude = angle.hi + (angle.lo + (num.lo * den.hi - den.lo * num.hi) / (num.hi * num.hi + den.hi * den.hi));
    let lon = atan2_dd(y, x).to_f64();
    let longitude = if p.hi == 0.0 { 0.0 } else { lon };
    // Height: projection on the normal, h = (p·den + z·num)/|(den, num)| − a·√(1 − e² sin²φ).
    let norm = num.mul(num).add(den.mul(den)).sqrt();
    let projection = p.mul(den).add(num.mul_f64(z)).div(norm);
    let sin_lat = num.hi / norm.hi;
    let a_w = Dd::sum(1.0, -(e2 * sin_lat * sin_lat)).sqrt().mul_f64(a);
    let height = projection.add(a_w.neg()).to_f64();
    [latitude, longitude, height]
}

/// Number of Bowring updates of the parametric latitude for Earth-like flattening
/// (f ≤ [`FLAT_LIMIT`]); flatter ellipsoids, up to [`MAX_FLATTENING`](super::model::MAX_FLATTENING),
/// take one more. Measured: both reach the rounding floor from −10 km to 40 000 km.
const BOWRING_STEPS: usize = 2;
/// Largest flattening for which [`BOWRING_STEPS`] updates suffice.
const FLAT_LIMIT: f64 = 0.01;

/// The inverse for any accepted model, choosing the number of Bowring updates.
#[inline(always)]
fn inverse_any(model: &EarthModel, x: f64, y: f64, z: f64) -> [f64; 3] {
    if model.flattening() <= FLAT_LIMIT {
        inverse::<BOWRING_STEPS>(model, x, y, z)
    } else {
        inverse::<{ BOWRING_STEPS + 1 }>(model, x, y, z)
    }
}

/// The inverse conversion for a point already checked to be finite and outside
/// [`EarthModel::centre_exclusion_radius`].
#[inline(always)]
pub(crate) fn inverse_unchecked(model: &EarthModel, ecef: &Vector3<f64>) -> Geodetic {
    let [latitude, longitude, height] = inverse_any(model, ecef.x, ecef.y, ecef.z);
    Geodetic { latitude, longitude, height }
}

#[inline(always)]
fn normalise(c: f64, s: f64) -> (f64, f64) {
    let inv = 1.0 / math::sqrt(c * c + s * s);
    (c * inv, s * inv)
}

/// Checks that an ECEF point is finite and outside [`EarthModel::centre_exclusion_radius`],
/// naming `quantity`.
#[inline(always)]
pub(crate) fn check_ecef(model: &EarthModel, ecef: &Vector3<f64>, quantity: &'static str) -> Result<()> {
    check_geocentric(ecef, model.centre_exclusion_radius(), quantity)
}

/// Checks that a point is finite and between `inner` and
/// [`MAX_GEOCENTRIC_DISTANCE`](limits::MAX_GEOCENTRIC_DISTANCE) from the Earth's centre, naming
/// `quantity`. One norm on the accepting path (NaN and overflow fail its comparisons).
#[inline(always)]
pub(crate) fn check_geocentric(ecef: &Vector3<f64>, inner: f64, quantity: &'static str) -> Result<()> {
    let distance = ecef.norm();
    if (distance >= inner) & (distance <= limits::MAX_GEOCENTRIC_DISTANCE) {
        return Ok(());
    }
    limits::check_vector(ecef, limits::MAX_GEOCENTRIC_DISTANCE, "m", quantity)?;
    Err(Error::NearEarthCentre { quantity, distance, limit: inner })
}

/// ECEF coordinates (m) of a geodetic position.
///
/// # Errors
/// As [`Geodetic::validate_for`]: a bad latitude, longitude or height, or a height outside the
/// [supported range](crate::limits).
///
/// # Example
/// IOGP Guidance Note 7-2, method 9602 worked example (WGS 84):
/// ```
/// use approx::assert_abs_diff_eq;
/// use rotaframe::earth::{geodetic_to_ecef, Geodetic, WGS84};
/// let dms = |d: f64, m: f64, s: f64| d + m / 60.0 + s / 3600.0;
/// let p = Geodetic::from_degrees(dms(53.0, 48.0, 33.820), dms(2.0, 7.0, 46.380), 73.0);
/// let xyz = geodetic_to_ecef(&WGS84, &p).unwrap();
/// assert_abs_diff_eq!(xyz.x, 3771793.968, epsilon = 0.0005);
/// assert_abs_diff_eq!(xyz.y, 140253.342, epsilon = 0.0005);
/// assert_abs_diff_eq!(xyz.z, 5124304.349, epsilon = 0.0005);
/// ```
pub fn geodetic_to_ecef(model: &EarthModel, position: &Geodetic) -> Result<Vector3<f64>> {
    position.validate_for(model)?;
    Ok(Vector3::from(crate::fast_call!(
        forward_any_fast,
        forward_any,
        (model, position.latitude, position.longitude, position.height)
    )))
}

/// Geodetic position of an ECEF point (m).
///
/// # Errors
/// [`Error::NonFinite`], [`Error::NearEarthCentre`] or [`Error::BeyondLimit`] (farther than
/// [`MAX_GEOCENTRIC_DISTANCE`](crate::limits::MAX_GEOCENTRIC_DISTANCE) from the centre) naming
/// `ecef`.
///
/// # Example
/// ```
/// use approx::assert_abs_diff_eq;
/// use rotaframe::earth::{ecef_to_geodetic, WGS84};
/// let p = ecef_to_geodetic(&WGS84, &nalgebra::Vector3::new(0.0, 0.0, 6356752.3142 + 10.0)).unwrap();
/// assert_eq!((p.latitude, p.longitude), (std::f64::consts::FRAC_PI_2, 0.0));
/// assert_abs_diff_eq!(p.height, 10.0, epsilon = 1e-4);
/// ```
#[inline]
pub fn ecef_to_geodetic(model: &EarthModel, ecef: &Vector3<f64>) -> Result<Geodetic> {
    check_ecef(model, ecef, "ecef")?;
    let [latitude, longitude, height] = crate::fast_call!(inverse_any_fast, inverse_any, (model, ecef.x, ecef.y, ecef.z));
    Ok(Geodetic { latitude, longitude, height })
}

fn check_len(found: usize, expected: usize, quantity: &'static str) -> core::result::Result<(), BatchError> {
    if found == expected {
        Ok(())
    } else {
        Err(BatchError { index: 0, error: Error::LengthMismatch { quantity, found, expected } })
    }
}

/// The validated forward batch over any input layout: every input is checked before any
/// output is written, then the loop runs branch-free.
#[inline(always)]
fn forward_batch<I>(model: &EarthModel, inputs: I, ecef: &mut [[f64; 3]]) -> core::result::Result<(), BatchError>
where
    I: Iterator<Item = (f64, f64, f64)> + Clone,
{
    let mut largest_longitude: f64 = 0.0;
    for (index, (lat, lon, h)) in inputs.clone().enumerate() {
        Geodetic::new(lat, lon, h).validate_for(model).map_err(|error| BatchError { index, error })?;
        largest_longitude = largest_longitude.max(lon.abs());
    }
    // Zipped iterators carry no bounds checks, so the common case vectorises.
    if largest_longitude <= SIN_COS_DD_LIMIT {
        for (out, (lat, lon, h)) in ecef.iter_mut().zip(inputs) {
            *out = forward(model, lat, lon, h);
        }
    } else {
        for (out, (lat, lon, h)) in ecef.iter_mut().zip(inputs) {
            *out = forward_any(model, lat, lon, h);
        }
    }
    Ok(())
}

/// The validated inverse batch over any output layout.
#[inline(always)]
fn inverse_batch<'a, O>(model: &EarthModel, ecef: &[[f64; 3]], outputs: O) -> core::result::Result<(), BatchError>
where
    O: Iterator<Item = (&'a mut f64, &'a mut f64, &'a mut f64)>,
{
    for (i, p) in ecef.iter().enumerate() {
        check_ecef(model, &Vector3::from(*p), "ecef").map_err(|error| BatchError { index: i, error })?;
    }
    // Two loops with the step count fixed at compile time, so that each vectorises.
    let points = ecef.iter().zip(outputs);
    if model.flattening() <= FLAT_LIMIT {
        for (p, (lat, lon, h)) in points {
            [*lat, *lon, *h] = inverse::<BOWRING_STEPS>(model, p[0], p[1], p[2]);
        }
    } else {
        for (p, (lat, lon, h)) in points {
            [*lat, *lon, *h] = inverse::<{ BOWRING_STEPS + 1 }>(model, p[0], p[1], p[2]);
        }
    }
    Ok(())
}

/// Converts a batch of geodetic positions given as three slices (radians, radians, metres) into
/// ECEF coordinates (m). Every input is validated before anything is written.
///
/// # Errors
/// [`BatchError`] with the index of the first bad element ([`Geodetic::validate`]), or
/// [`Error::LengthMismatch`] (index 0) if the slices differ in length.
///
/// ```
/// use rotaframe::earth::{geodetic_to_ecef_slices, WGS84};
/// let lat = [0.0, 0.5];
/// let lon = [0.0, 1.0];
/// let h = [0.0, 100.0];
/// let mut xyz = [[0.0; 3]; 2];
/// geodetic_to_ecef_slices(&WGS84, &lat, &lon, &h, &mut xyz).unwrap();
/// assert_eq!(xyz[0], [6378137.0, 0.0, 0.0]);
/// ```
// Kept out of line: inlined into a large caller (a Python binding's function body) the loop
// was left scalar by the optimiser, 4 times slower.
#[inline(never)]
pub fn geodetic_to_ecef_slices(
    model: &EarthModel,
    latitude: &[f64],
    longitude: &[f64],
    height: &[f64],
    ecef: &mut [[f64; 3]],
) -> core::result::Result<(), BatchError> {
    let n = latitude.len();
    check_len(longitude.len(), n, "longitude")?;
    check_len(height.len(), n, "height")?;
    check_len(ecef.len(), n, "ecef")?;
    crate::fast_call!(forward_slices_fast, forward_slices, (model, latitude, longitude, height, ecef))
}

#[inline(always)]
fn forward_slices(
    model: &EarthModel,
    latitude: &[f64],
    longitude: &[f64],
    height: &[f64],
    ecef: &mut [[f64; 3]],
) -> core::result::Result<(), BatchError> {
    let inputs = latitude.iter().zip(longitude).zip(height).map(|((&lat, &lon), &h)| (lat, lon, h));
    forward_batch(model, inputs, ecef)
}
crate::fast_twin!(fn forward_slices_fast(model: &EarthModel, latitude: &[f64], longitude: &[f64], height: &[f64], ecef: &mut [[f64; 3]]) -> core::result::Result<(), BatchError> = forward_slices);

/// Converts a batch of geodetic positions into ECEF coordinates (m). Every input is validated
/// before anything is written.
///
/// # Errors
/// As [`geodetic_to_ecef_slices`].
///
/// ```
/// use rotaframe::earth::{geodetic_to_ecef_many, Geodetic, WGS84};
/// let mut xyz = [[0.0; 3]; 1];
/// geodetic_to_ecef_many(&WGS84, &[Geodetic::new(0.0, 0.0, 0.0)], &mut xyz).unwrap();
/// assert_eq!(xyz[0], [6378137.0, 0.0, 0.0]);
/// ```
// Kept out of line for the reason given at `geodetic_to_ecef_slices`.
#[inline(never)]
pub fn geodetic_to_ecef_many(
    model: &EarthModel,
    positions: &[Geodetic],
    ecef: &mut [[f64; 3]],
) -> core::result::Result<(), BatchError> {
    check_len(ecef.len(), positions.len(), "ecef")?;
    crate::fast_call!(forward_many_fast, forward_many, (model, positions, ecef))
}

#[inline(always)]
fn forward_many(model: &EarthModel, positions: &[Geodetic], ecef: &mut [[f64; 3]]) -> core::result::Result<(), BatchError> {
    forward_batch(model, positions.iter().map(|g| (g.latitude, g.longitude, g.height)), ecef)
}
crate::fast_twin!(fn forward_many_fast(model: &EarthModel, positions: &[Geodetic], ecef: &mut [[f64; 3]]) -> core::result::Result<(), BatchError> = forward_many);

/// Converts a batch of ECEF points (m) into geodetic latitude, longitude (radians) and height
/// (m), written to three slices. Every input is validated before anything is written.
///
/// # Errors
/// [`BatchError`] with the index of the first bad element (as [`ecef_to_geodetic`]), or
/// [`Error::LengthMismatch`] (index 0) if the slices differ in length.
// Kept out of line for the reason given at `geodetic_to_ecef_slices`.
#[inline(never)]
pub fn ecef_to_geodetic_slices(
    model: &EarthModel,
    ecef: &[[f64; 3]],
    latitude: &mut [f64],
    longitude: &mut [f64],
    height: &mut [f64],
) -> core::result::Result<(), BatchError> {
    let n = ecef.len();
    check_len(latitude.len(), n, "latitude")?;
    check_len(longitude.len(), n, "longitude")?;
    check_len(height.len(), n, "height")?;
    crate::fast_call!(inverse_slices_fast, inverse_slices, (model, ecef, latitude, longitude, height))
}

#[inline(always)]
fn inverse_slices(
    model: &EarthModel,
    ecef: &[[f64; 3]],
    latitude: &mut [f64],
    longitude: &mut [f64],
    height: &mut [f64],
) -> core::result::Result<(), BatchError> {
    let outputs = latitude.iter_mut().zip(longitude.iter_mut()).zip(height.iter_mut()).map(|((a, b), c)| (a, b, c));
    inverse_batch(model, ecef, outputs)
}
crate::fast_twin!(fn inverse_slices_fast(model: &EarthModel, ecef: &[[f64; 3]], latitude: &mut [f64], longitude: &mut [f64], height: &mut [f64]) -> core::result::Result<(), BatchError> = inverse_slices);

/// Converts a batch of ECEF points (m) into geodetic positions. Every input is validated
/// before anything is written.
///
/// # Errors
/// As [`ecef_to_geodetic_slices`].
// Kept out of line for the reason given at `geodetic_to_ecef_slices`.
#[inline(never)]
pub fn ecef_to_geodetic_many(
    model: &EarthModel,
    ecef: &[[f64; 3]],
    positions: &mut [Geodetic],
) -> core::result::Result<(), BatchError> {
    check_len(positions.len(), ecef.len(), "positions")?;
    crate::fast_call!(inverse_many_fast, inverse_many, (model, ecef, positions))
}

#[inline(always)]
fn inverse_many(model: &EarthModel, ecef: &[[f64; 3]], positions: &mut [Geodetic]) -> core::result::Result<(), BatchError> {
    let outputs = positions.iter_mut().map(|g| (&mut g.latitude, &mut g.longitude, &mut g.height));
    inverse_batch(model, ecef, outputs)
}
crate::fast_twin!(fn inverse_many_fast(model: &EarthModel, ecef: &[[f64; 3]], positions: &mut [Geodetic]) -> core::result::Result<(), BatchError> = inverse_many);
