//! Demo: the apparent-acceleration budget of an accelerometer on a rate table.
//!
//! Invented scenario. A MEMS accelerometer triad is under acceptance test on a single-axis rate
//! table. The turntable turns counter-clockwise (seen from above) about its vertical axis at
//! 200 °/s and is still spinning up at 20 °/s². The sensor rides a radial slide: it is 0.12 m
//! from the axis, 0.03 m above the table top, and the slide is driving it outward at 5 cm/s.
//! For a test this short the laboratory is treated as inertial.
//!
//! Run with `cargo run -p rotaframe-examples --example demo`.

use rotaframe::apparent::apparent_acceleration;
use rotaframe::frames::PointKinematics;
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra::Vector3;
use rotaframe_examples::print_budget;

rotaframe::frame!(
    /// Laboratory axes, x east, y north, z up; treated as inertial for a short test.
    Laboratory: inertial
);
rotaframe::frame!(
    /// Turntable axes: z along the spin axis (up), x along the radial slide.
    Turntable
);

fn main() -> Result<(), rotaframe::Error> {
    let rate = 200f64.to_radians();
    let spin_up = 20f64.to_radians();
    let elapsed = 3.0; // seconds since the table passed its zero mark
    let table = FrameMotion::<Laboratory, Turntable>::about_axis(Vector3::z(), rate * elapsed, rate, spin_up)?;
    let sensor =
        PointKinematics::<Turntable>::try_new(Vector3::new(0.12, 0.0, 0.03), Vector3::new(0.05, 0.0, 0.0), Vector3::zeros())?;

    println!("rotaframe demo: accelerometer on a spinning rate table");
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
        "cross-check: the sensor's true acceleration in the laboratory is {:.6} m/s²; seen on the table it is {:.6} m/s²",
        inertial.acceleration.norm(),
        (table.rotation().inverse_transform_vector(&inertial.acceleration) + terms.total).norm()
    );
    println!(
        "(zero to rounding: the slide moves at constant speed, so all of the true acceleration is absorbed by the apparent terms)"
    );
    Ok(())
}
