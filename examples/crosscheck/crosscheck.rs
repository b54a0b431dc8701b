//! The cross-language check of `bash scripts/demo`, Rust side: one invented scenario, every
//! result printed as `name value` with 17 significant digits. `crosscheck.py` and
//! `crosscheck.c` beside this file compute the same through the Python package and the C
//! library; `scripts/demo` prints the three side by side.
//!
//! The scenario (invented, the same numbers in all three files):
//! 1. a survey aircraft at 48.2° N, 11.6° E, 5 000 m, 130 m/s on a heading of 060°, climbing
//!    at 2 m/s: its ECEF position, normal gravity, the transport rate, the Coriolis term of
//!    the NED velocity equation and the Eötvös correction of its gravimeter;
//! 2. a sensor on a rate table spinning at 200 °/s and spinning up at 20 °/s², 0.12 m out
//!    and 0.03 m up, sliding outward at 5 cm/s: its Coriolis, centrifugal and Euler terms;
//! 3. a stationary INS on the apron below (h = 0, level, facing north) with a 1 mg north
//!    accelerometer bias, navigating free-inertial for 10 min at 100 Hz: its final state.
//!
//! Run: `cargo run -p rotaframe-examples --example crosscheck`.

use rotaframe::apparent::{FrameDynamics, apparent_terms};
use rotaframe::earth::{
    Geodetic, WGS84, coriolis_ned, earth_rate_ned, eotvos_correction, geodetic_to_ecef, normal_gravity_at_height,
    transport_rate_ned,
};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::{ImuIncrement, NavState, Strapdown, StrapdownConfig};

const PI: f64 = core::f64::consts::PI;

fn put(name: &str, value: f64) {
    println!("{name} {value:.16e}");
}

fn put3(name: &str, v: &Vector3<f64>) {
    for (axis, x) in ["x", "y", "z"].iter().zip(v.iter()) {
        put(&format!("{name}.{axis}"), *x);
    }
}

fn main() -> Result<(), rotaframe::Error> {
    let earth = WGS84;
    // 1. The aircraft.
    let (lat, lon, h) = (48.2 * PI / 180.0, 11.6 * PI / 180.0, 5000.0);
    let heading = 60.0 * PI / 180.0;
    let v_ned = Vector3::new(130.0 * heading.cos(), 130.0 * heading.sin(), -2.0);
    put3("aircraft.ecef", &geodetic_to_ecef(&earth, &Geodetic::new(lat, lon, h))?);
    put("aircraft.normal_gravity", normal_gravity_at_height(&earth, lat, h)?);
    put3("aircraft.transport_rate_ned", &transport_rate_ned(&earth, lat, h, &v_ned)?);
    put3("aircraft.coriolis_ned", &coriolis_ned(&earth, lat, h, &v_ned)?);
    put("aircraft.eotvos_correction", eotvos_correction(&earth, lat, h, &v_ned)?);
    // 2. The rate table.
    let dynamics = FrameDynamics {
        angular_velocity: Vector3::new(0.0, 0.0, 200.0 * PI / 180.0),
        angular_acceleration: Vector3::new(0.0, 0.0, 20.0 * PI / 180.0),
        origin_acceleration: Vector3::zeros(),
    };
    let terms = apparent_terms(&dynamics, &Vector3::new(0.12, 0.0, 0.03), &Vector3::new(0.05, 0.0, 0.0));
    put3("table.coriolis", &terms.coriolis);
    put3("table.centrifugal", &terms.centrifugal);
    put3("table.euler", &terms.euler);
    // 3. The stationary INS: ideal increments plus the bias, 60 000 steps of 10 ms.
    let (dt, bias) = (0.01, 1e-3 * 9.806_65);
    let gamma = normal_gravity_at_height(&earth, lat, 0.0)?;
    let increment = ImuIncrement::new(earth_rate_ned(&earth, lat)? * dt, Vector3::new(bias, 0.0, -gamma) * dt, dt);
    let start = NavState::new(Geodetic::new(lat, lon, 0.0), Vector3::zeros(), UnitQuaternion::identity());
    let mut ins = Strapdown::new(StrapdownConfig::default(), &start)?;
    for _ in 0..60_000 {
        ins.step(&increment)?;
    }
    let end = ins.state();
    put("ins.lat_deg", end.position.latitude * 180.0 / PI);
    put("ins.lon_deg", end.position.longitude * 180.0 / PI);
    put("ins.h", end.position.height);
    put3("ins.v_ned", &end.velocity_ned);
    Ok(())
}
