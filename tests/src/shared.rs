//! The shared cross-language vectors: deterministic inputs and the core's outputs for every
//! function that all bindings expose. `gen_shared_vectors` writes them to
//! `tests/vectors/shared_cases.txt`; the Rust, Python and C tests read that file back.

use rotaframe::apparent::{FrameDynamics, apparent_terms};
use rotaframe::earth::{self, Geodetic, WGS84};
use rotaframe::frames::{AnyFrame, PointKinematics};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra::{Quaternion, UnitQuaternion, Vector3};
use rotaframe::rotation::{EulerZyx, quaternion_to_wxyz};

use crate::Seeded;

/// One line of the file.
#[derive(Debug, Clone, PartialEq)]
pub struct Case {
    /// Function name, as the bindings spell it.
    pub function: String,
    /// Input numbers.
    pub inputs: Vec<f64>,
    /// Output numbers.
    pub outputs: Vec<f64>,
}

/// Random motions for the vectors.
trait RandomMotion {
    fn motion(&mut self) -> FrameMotion<AnyFrame, AnyFrame>;
    fn next(&mut self) -> f64;
}

impl RandomMotion for Seeded {
    fn next(&mut self) -> f64 {
        self.next_signed()
    }

    fn motion(&mut self) -> FrameMotion<AnyFrame, AnyFrame> {
        let q = UnitQuaternion::from_quaternion(Quaternion::new(self.next() + 1.5, self.next(), self.next(), self.next()));
        FrameMotion::from_parts(MotionParts {
            rotation: q,
            position: self.vector(1e4),
            velocity: self.vector(100.0),
            acceleration: self.vector(10.0),
            angular_velocity: self.vector(1.0),
            angular_acceleration: self.vector(0.1),
        })
        .expect("finite")
    }
}

/// The 19 numbers of a motion: rotation (w, x, y, z) then the five vectors.
#[must_use]
pub fn motion_numbers(m: &FrameMotion<AnyFrame, AnyFrame>) -> Vec<f64> {
    let p = m.parts();
    let mut v = quaternion_to_wxyz(&p.rotation).to_vec();
    for x in [p.position, p.velocity, p.acceleration, p.angular_velocity, p.angular_acceleration] {
        v.extend_from_slice(x.as_slice());
    }
    v
}

/// A motion from its 19 numbers.
#[must_use]
pub fn motion_from_numbers(v: &[f64]) -> FrameMotion<AnyFrame, AnyFrame> {
    let q = rotaframe::rotation::quaternion_from_wxyz([v[0], v[1], v[2], v[3]], "rotation").expect("unit");
    let vec = |k: usize| Vector3::new(v[4 + 3 * k], v[5 + 3 * k], v[6 + 3 * k]);
    FrameMotion::from_parts(MotionParts {
        rotation: q,
        position: vec(0),
        velocity: vec(1),
        acceleration: vec(2),
        angular_velocity: vec(3),
        angular_acceleration: vec(4),
    })
    .expect("finite")
}

fn case(function: &str, inputs: Vec<f64>, outputs: Vec<f64>) -> Case {
    Case { function: function.to_string(), inputs, outputs }
}

/// Evaluates one function on the given inputs with the core (the definition of each case).
///
/// # Panics
/// On an unknown function name or inputs the core rejects.
#[must_use]
pub fn evaluate(function: &str, x: &[f64]) -> Vec<f64> {
    let v3 = |k: usize| Vector3::new(x[k], x[k + 1], x[k + 2]);
    let m = &WGS84;
    match function {
        "map_point" => {
            let p = motion_from_numbers(&x[..19]).map_point(&PointKinematics::new(v3(19), v3(22), v3(25)));
            [p.position, p.velocity, p.acceleration].iter().flat_map(|v| v.iter().copied()).collect()
        }
        "compose" => motion_numbers(&motion_from_numbers(&x[..19]).then(&motion_from_numbers(&x[19..38]))),
        "inverse" => motion_numbers(&motion_from_numbers(&x[..19]).inverse()),
        "apparent_acceleration" => {
            let d = FrameDynamics { angular_velocity: v3(0), angular_acceleration: v3(3), origin_acceleration: v3(6) };
            let t = apparent_terms(&d, &v3(9), &v3(12));
            [t.translational, t.coriolis, t.centrifugal, t.euler, t.total].iter().flat_map(|v| v.iter().copied()).collect()
        }
        "geodetic_to_ecef" => earth::geodetic_to_ecef(m, &Geodetic::new(x[0], x[1], x[2])).unwrap().as_slice().to_vec(),
        "ecef_to_geodetic" => {
            let g = earth::ecef_to_geodetic(m, &v3(0)).unwrap();
            vec![g.latitude, g.longitude, g.height]
        }
        "quat_from_euler" => quaternion_to_wxyz(&EulerZyx::new(x[0], x[1], x[2]).to_quaternion()).to_vec(),
        "euler_from_quat" => {
            let q = rotaframe::rotation::quaternion_from_wxyz([x[0], x[1], x[2], x[3]], "q").unwrap();
            let e = EulerZyx::from_quaternion(&q);
            vec![e.yaw, e.pitch, e.roll]
        }
        "normal_gravity" => vec![earth::normal_gravity_at_height(m, x[0], x[1]).unwrap()],
        "gravitation_ecef" => earth::gravitation_ecef(m, &v3(0)).unwrap().as_slice().to_vec(),
        "gravity_ecef" => earth::gravity_ecef(m, &v3(0)).unwrap().as_slice().to_vec(),
        "earth_rate_ned" => earth::earth_rate_ned(m, x[0]).unwrap().as_slice().to_vec(),
        "transport_rate_ned" => earth::transport_rate_ned(m, x[0], x[1], &v3(2)).unwrap().as_slice().to_vec(),
        "eotvos_correction" => vec![earth::eotvos_correction(m, x[0], x[1], &v3(2)).unwrap()],
        "coriolis_parameter" => vec![earth::coriolis_parameter(m, x[0]).unwrap()],
        "earth_rotation_angle" => vec![earth::earth_rotation_angle(x[0], x[1]).unwrap()],
        "radii_of_curvature" => {
            let r = earth::radii_of_curvature(m, x[0]).unwrap();
            vec![r.meridian, r.prime_vertical]
        }
        "ned_from_ecef" => earth::ned_from_ecef(x[0], x[1]).unwrap().transpose().as_slice().to_vec(),
        "local_level_motion" => motion_numbers(
            &earth::local_level_motion(m, &Geodetic::new(x[0], x[1], x[2]), &v3(3), &v3(6)).unwrap().erase_frames(),
        ),
        "ideal_imu" => {
            let body = motion_from_numbers(&x[..19]).assume_frames::<rotaframe::frames::Eci, AnyFrame>();
            let s = rotaframe::nav::ideal_imu(m, earth::GravityModel::Normal, &body).unwrap();
            [s.angular_rate, s.specific_force].iter().flat_map(|v| v.iter().copied()).collect()
        }
        "strapdown_ned" | "strapdown_ecef" => strapdown_case(function == "strapdown_ecef", x),
        "graph_chain" => graph_case(x),
        other => panic!("unknown shared function {other}"),
    }
}

/// Steps of a strapdown case: inputs are the initial latitude, longitude, height, NED velocity
/// and attitude (10 numbers), then [`STRAPDOWN_STEPS`] increments of 7 numbers (Δθ, Δv, dt);
/// outputs the final latitude, longitude, height, NED velocity and attitude (10 numbers).
/// Normal gravity, free vertical channel, WGS 84.
pub const STRAPDOWN_STEPS: usize = 5;

fn strapdown_case(ecef: bool, x: &[f64]) -> Vec<f64> {
    use rotaframe::nav::{ImuIncrement, NavFrame, NavState, Strapdown, StrapdownConfig};
    let q = rotaframe::rotation::quaternion_from_wxyz([x[6], x[7], x[8], x[9]], "attitude").unwrap();
    let start = NavState::new(Geodetic::new(x[0], x[1], x[2]), Vector3::new(x[3], x[4], x[5]), q);
    let frame = if ecef { NavFrame::Ecef } else { NavFrame::Ned };
    let mut ins = Strapdown::new(StrapdownConfig { frame, ..StrapdownConfig::default() }, &start).unwrap();
    for k in 0..STRAPDOWN_STEPS {
        let i = &x[10 + 7 * k..17 + 7 * k];
        ins.step(&ImuIncrement::new(Vector3::new(i[0], i[1], i[2]), Vector3::new(i[3], i[4], i[5]), i[6])).unwrap();
    }
    let s = ins.state();
    let mut out = vec![s.position.latitude, s.position.longitude, s.position.height];
    out.extend_from_slice(s.velocity_ned.as_slice());
    out.extend_from_slice(&quaternion_to_wxyz(&s.attitude));
    out
}

/// A frame graph case: inertial → ecef (Earth, angle at epoch `x[0]`) → pad (NED site at
/// `x[1..4]`) → table (spin: axis `x[4..7]`, rate `x[7]`, angle at zero `x[8]`, angular
/// acceleration `x[9]`) → sensor (fixed: quaternion `x[10..14]`, offset `x[14..17]`), and a
/// camera fixed on the pad (quaternion `x[17..21]`, offset `x[21..24]`); at time `x[24]` the
/// outputs are the sensor relative to the inertial frame (19 numbers) then the sensor relative
/// to the camera (19).
fn graph_case(x: &[f64]) -> Vec<f64> {
    use rotaframe::graph::{EarthRotation, Fixed, FrameGraph, LocalAxes, Site, Spin};
    let v3 = |k: usize| Vector3::new(x[k], x[k + 1], x[k + 2]);
    let q = |k: usize| rotaframe::rotation::quaternion_from_wxyz([x[k], x[k + 1], x[k + 2], x[k + 3]], "q").unwrap();
    let mut g = FrameGraph::new("inertial", true);
    g.add_earth("ecef", "inertial", EarthRotation::with_angle(WGS84, x[0]).unwrap()).unwrap();
    g.add_site("pad", "ecef", Site::new(WGS84, Geodetic::new(x[1], x[2], x[3]), LocalAxes::Ned).unwrap()).unwrap();
    g.add_spin("table", "pad", Spin::new(v3(4), x[7], x[8], x[9]).unwrap()).unwrap();
    g.add_fixed("sensor", "table", Fixed::new(q(10), v3(14)).unwrap()).unwrap();
    g.add_fixed("camera", "pad", Fixed::new(q(17), v3(21)).unwrap()).unwrap();
    let mut out = motion_numbers(&g.motion("inertial", "sensor", x[24]).unwrap());
    out.extend(motion_numbers(&g.motion("camera", "sensor", x[24]).unwrap()));
    out
}

/// Every case, with deterministic inputs (SplitMix64, seed 2026).
#[must_use]
pub fn all_cases() -> Vec<Case> {
    let mut rng = Seeded(2026);
    let mut cases = Vec::new();
    let mut add = |f: &str, inputs: Vec<f64>| {
        let outputs = evaluate(f, &inputs);
        cases.push(case(f, inputs, outputs));
    };
    for _ in 0..8 {
        let m = rng.motion();
        let mut x = motion_numbers(&m);
        x.extend(rng.vector(10.0).iter().chain(rng.vector(1.0).iter()).chain(rng.vector(0.1).iter()));
        add("map_point", x);
        let mut x = motion_numbers(&rng.motion());
        x.extend(motion_numbers(&rng.motion()));
        add("compose", x);
        add("inverse", motion_numbers(&rng.motion()));
        let x: Vec<f64> = [rng.vector(2.0), rng.vector(0.5), rng.vector(5.0), rng.vector(10.0), rng.vector(3.0)]
            .iter()
            .flat_map(|v| v.iter().copied())
            .collect();
        add("apparent_acceleration", x);
        let (lat, lon, h) = (rng.next() * 1.5, rng.next() * 3.1, rng.next() * 1.0e4);
        add("geodetic_to_ecef", vec![lat, lon, h]);
        let xyz =
            earth::geodetic_to_ecef(&WGS84, &Geodetic::new(rng.next() * 1.5, rng.next() * 3.1, rng.next() * 2.0e5)).unwrap();
        add("ecef_to_geodetic", xyz.as_slice().to_vec());
        add("quat_from_euler", vec![rng.next() * 3.1, rng.next() * 1.5, rng.next() * 3.1]);
        let q = UnitQuaternion::from_quaternion(Quaternion::new(rng.next(), rng.next(), rng.next(), rng.next()));
        add("euler_from_quat", quaternion_to_wxyz(&q).to_vec());
        add("normal_gravity", vec![rng.next() * 1.5, rng.next() * 5000.0]);
        let pos = earth::geodetic_to_ecef(&WGS84, &Geodetic::new(rng.next() * 1.5, rng.next() * 3.1, (rng.next() + 1.0) * 1.0e5))
            .unwrap();
        add("gravitation_ecef", pos.as_slice().to_vec());
        add("gravity_ecef", pos.as_slice().to_vec());
        add("earth_rate_ned", vec![rng.next() * 1.5]);
        let v = rng.vector(200.0);
        add("transport_rate_ned", vec![rng.next() * 1.5, rng.next() * 1.0e4, v.x, v.y, v.z]);
        add("eotvos_correction", vec![rng.next() * 1.5, rng.next() * 1.0e4, v.x, v.y, v.z]);
        add("coriolis_parameter", vec![rng.next() * 1.5]);
        add("earth_rotation_angle", vec![2_451_545.0 + (rng.next() * 1.0e4).round(), rng.next().abs()]);
        add("radii_of_curvature", vec![rng.next() * 1.5]);
        add("ned_from_ecef", vec![rng.next() * 1.5, rng.next() * 3.1]);
        let (v, a) = (rng.vector(250.0), rng.vector(3.0));
        add("local_level_motion", vec![rng.next() * 1.5, rng.next() * 3.1, rng.next() * 1.0e4, v.x, v.y, v.z, a.x, a.y, a.z]);
        // A body near the Earth's surface relative to the inertial frame.
        let mut body = motion_numbers(&rng.motion());
        let r = earth::geodetic_to_ecef(&WGS84, &Geodetic::new(rng.next() * 1.5, rng.next() * 3.1, rng.next() * 1.0e4)).unwrap();
        body[4..7].copy_from_slice(r.as_slice());
        add("ideal_imu", body);
        for function in ["strapdown_ned", "strapdown_ecef"] {
            let q = UnitQuaternion::from_quaternion(Quaternion::new(rng.next() + 1.5, rng.next(), rng.next(), rng.next()));
            let v = rng.vector(200.0);
            let mut x = vec![rng.next() * 1.4, rng.next() * 3.1, rng.next() * 5.0e3, v.x, v.y, v.z];
            x.extend_from_slice(&quaternion_to_wxyz(&q));
            let gravity = q.inverse() * Vector3::new(0.0, 0.0, -9.8);
            for _ in 0..STRAPDOWN_STEPS {
                let dt = 0.01 * (1.0 + 0.2 * rng.next());
                let (dtheta, dv) = (rng.vector(0.01), rng.vector(0.2) + gravity * dt);
                x.extend(dtheta.iter().chain(dv.iter()).copied().chain([dt]));
            }
            add(function, x);
        }
    }
    // Frame-graph cases from their own stream, so that adding them left the cases above as
    // they were.
    let mut rng = Seeded(2027);
    let unit = |rng: &mut Seeded| {
        let q = UnitQuaternion::from_quaternion(Quaternion::new(rng.next() + 1.5, rng.next(), rng.next(), rng.next()));
        quaternion_to_wxyz(&q)
    };
    for _ in 0..8 {
        let mut x = vec![rng.next() * 3.1, rng.next() * 1.5, rng.next() * 3.1, rng.next() * 1.0e3];
        x.extend(rng.vector(1.0).iter());
        x.extend([rng.next() * 5.0, rng.next() * 3.1, rng.next() * 0.5]);
        x.extend(unit(&mut rng));
        x.extend(rng.vector(2.0).iter());
        x.extend(unit(&mut rng));
        x.extend(rng.vector(20.0).iter());
        x.push(rng.next() * 100.0);
        add("graph_chain", x);
    }
    cases
}

/// Parses the file format written by `gen_shared_vectors`.
///
/// # Panics
/// On a malformed line.
#[must_use]
pub fn parse(text: &str) -> Vec<Case> {
    text.lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
        .map(|l| {
            let mut parts = l.split('|');
            let function = parts.next().unwrap().trim().to_string();
            let nums = |s: &str| s.split_whitespace().map(|t| t.parse::<f64>().unwrap()).collect::<Vec<_>>();
            let inputs = nums(parts.next().unwrap());
            let outputs = nums(parts.next().unwrap());
            Case { function, inputs, outputs }
        })
        .collect()
}
