//! Demo: apparent-acceleration budgets in two invented scenarios.
//!
//! 1. A MEMS accelerometer triad under acceptance test on a single-axis rate table. The
//!    turntable turns counter-clockwise (seen from above) about its vertical axis at 200 °/s and
//!    is still spinning up at 20 °/s². The sensor rides a radial slide: it is 0.12 m from the
//!    axis, 0.03 m above the table top, and the slide drives it outward at 5 cm/s. For a test
//!    this short the laboratory is treated as inertial.
//! 2. A survey aircraft carrying an airborne gravimeter over the rotating Earth, at 48.2° N,
//!    11.6° E and 5 000 m, flying at 130 m/s on a heading of 060° and climbing at 2 m/s. The
//!    chain inertial → Earth-fixed → local level shows the rates its navigation frame turns
//!    at, and the budget shows what the Earth's rotation adds to the aircraft's motion.
//!
//! Run with `bash scripts/demo` (or `cargo run -p rotaframe-examples --example demo`).

use rotaframe::apparent::apparent_acceleration;
use rotaframe::earth::{
    Geodetic, WGS84, coriolis_parameter, earth_motion, earth_rate_ned, eotvos_correction, geodetic_to_ecef, local_level_motion,
    normal_gravity_at_height, transport_rate_ned,
};
use rotaframe::frames::PointKinematics;
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra::Vector3;
use rotaframe_examples::{print_budget, sci};

rotaframe::frame!(
    /// Laboratory axes, x east, y north, z up; treated as inertial for a short test.
    Laboratory: inertial
);
rotaframe::frame!(
    /// Turntable axes: z along the spin axis (up), x along the radial slide.
    Turntable
);

fn rate_table() -> Result<(), rotaframe::Error> {
    let rate = 200f64.to_radians();
    let spin_up = 20f64.to_radians();
    let elapsed = 3.0; // seconds since the table passed its zero mark
    let table = FrameMotion::<Laboratory, Turntable>::about_axis(Vector3::z(), rate * elapsed, rate, spin_up)?;
    let sensor =
        PointKinematics::<Turntable>::try_new(Vector3::new(0.12, 0.0, 0.03), Vector3::new(0.05, 0.0, 0.0), Vector3::zeros())?;

    println!("== 1. Accelerometer on a spinning rate table ==");
    println!(
        "table rate {:.1} °/s, spin-up {:.1} °/s², sensor at r = {:.3} m moving outward at {:.3} m/s\n",
        rate.to_degrees(),
        spin_up.to_degrees(),
        sensor.position.xy().norm(),
        sensor.velocity.x
    );
    let terms = apparent_acceleration(&table, &sensor);
    print_budget(
        "Apparent accelerations felt by the sensor (what the table frame adds to Newton's law)",
        ["x radial", "y tangential", "z up"],
        &terms,
    );
    let inertial = table.map_point(&sensor);
    println!(
        "cross-check: true acceleration in the laboratory {:.6} m/s²; seen on the table (rotated true + apparent) {:.1e} m/s²",
        inertial.acceleration.norm(),
        (table.rotation().inverse_transform_vector(&inertial.acceleration) + terms.total).norm()
    );
    println!(
        "(zero to rounding: the slide moves at constant speed, so the apparent terms absorb all of the true acceleration)\n"
    );
    Ok(())
}

fn survey_aircraft() -> Result<(), rotaframe::Error> {
    let position = Geodetic::from_degrees(48.2, 11.6, 5_000.0);
    let heading = 60f64.to_radians();
    let v_ned = Vector3::new(130.0 * heading.cos(), 130.0 * heading.sin(), -2.0);
    println!("== 2. Survey aircraft over the rotating Earth (WGS 84) ==");
    println!("48.2° N, 11.6° E, 5000 m; 130 m/s on heading 060°, climbing 2 m/s\n");

    // The chain inertial → Earth-fixed → NED carried by the aircraft.
    let earth = earth_motion(&WGS84, 0.0, 0.0)?;
    let ned = local_level_motion(&WGS84, &position, &v_ned, &Vector3::zeros())?;
    let chain = earth.then(&ned);
    let w_ie = earth_rate_ned(&WGS84, position.latitude)?;
    let w_en = transport_rate_ned(&WGS84, position.latitude, position.height, &v_ned)?;
    println!("angular velocity of the NED frame, resolved in NED (rad/s):");
    println!("  {:<36} {:>12} {:>12} {:>12}", "", "north", "east", "down");
    for (name, w) in [
        ("Earth rate ω_ie", w_ie),
        ("transport rate ω_en", w_en),
        ("relative to inertial (via the chain)", chain.angular_velocity_in_child()),
    ] {
        println!("  {:<36} {:>12} {:>12} {:>12}", name, sci(w.x), sci(w.y), sci(w.z));
    }
    println!();

    // The aircraft as a point moving relative to the rotating Earth: apparent terms in ECEF,
    // shown in the aircraft's NED axes.
    let r = geodetic_to_ecef(&WGS84, &position)?;
    let aircraft = PointKinematics::new(r, ned.velocity(), Vector3::zeros());
    let terms = apparent_acceleration(&earth, &aircraft).resolved_in(&ned.inverse());
    print_budget("Apparent accelerations of the Earth-fixed frame acting on the aircraft", ["north", "east", "down"], &terms);
    let g = normal_gravity_at_height(&WGS84, position.latitude, position.height)?;
    let eotvos = eotvos_correction(&WGS84, position.latitude, position.height, &v_ned)?;
    println!("normal gravity here {g:.6} m/s²; the centrifugal term is {:.2} % of it", 100.0 * terms.centrifugal.norm() / g);
    println!("Coriolis parameter f = 2Ω sin φ = {} 1/s", sci(coriolis_parameter(&WGS84, position.latitude)?));
    println!("Eötvös correction to add to the gravimeter reading: {:+.2} mGal", eotvos * 1e5);
    Ok(())
}

fn main() -> Result<(), rotaframe::Error> {
    println!("rotaframe demo — invented scenarios, for illustration only\n");
    rate_table()?;
    survey_aircraft()
}
