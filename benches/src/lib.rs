//! criterion benchmarks for rotaframe live in `benches/`; this library holds the inputs that
//! several of them share.

use rotaframe::earth::Geodetic;
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::{ImuIncrement, NavState};
use rotaframe_tests::Seeded;

/// Increments per navigation benchmark iteration.
pub const STEPS: usize = 1000;

/// 1000 increments of a manoeuvre-like sequence at 100 Hz: random rates and forces on top of
/// the stationary outputs of a level body.
#[must_use]
pub fn increments() -> Vec<ImuIncrement> {
    let mut rng = Seeded(7);
    (0..STEPS).map(|_| ImuIncrement::new(rng.vector(1e-3), rng.vector(0.02) + Vector3::new(0.0, 0.0, -0.098), 0.01)).collect()
}

/// The navigation benchmarks' initial state: 45° N, 1500 m, 125 m/s.
#[must_use]
pub fn start() -> NavState {
    NavState::new(Geodetic::new(0.785, 0.2, 1500.0), Vector3::new(120.0, -35.0, 0.0), UnitQuaternion::identity())
}
