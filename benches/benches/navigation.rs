//! Strapdown mechanization steps per second and IMU synthesis, each beside a baseline measured
//! in the same run over the same seeded inputs.
//!
//! Run with `cargo bench -p rotaframe-benches --bench navigation`.
//!
//! * `strapdown_step`: rotaframe's NED and ECEF steps (two-sample coning and sculling, exact
//!   rotation compensation, two-pass predictor–corrector) against a textbook first-order NED
//!   step written here with nalgebra (no coning or sculling, one pass, Euler integration): the
//!   ratio is what the accuracy costs.
//! * `imu_synthesis`: one ideal increment of the closure manoeuvre (six evaluations of the
//!   five-link frame chain plus the ideal IMU) against the six chain evaluations alone.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rotaframe::earth::{GravityModel, WGS84, normal_gravity_at_height, radii_of_curvature};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::{ImuIncrement, NavFrame, Strapdown, StrapdownConfig, imu_increment, quadrature_times};
use rotaframe_tests::trajectories::Manoeuvres;

use rotaframe_benches::{STEPS, increments, start};

/// A first-order NED step: attitude by the rotation vector, velocity and position by Euler
/// steps, Earth rate, transport rate, Coriolis and normal gravity at the start of the interval.
#[derive(Clone, Copy)]
struct Textbook {
    lat: f64,
    lon: f64,
    h: f64,
    v: Vector3<f64>,
    q: UnitQuaternion<f64>,
}

impl Textbook {
    fn step(&mut self, inc: &ImuIncrement) {
        let t = inc.interval;
        let (s, c) = self.lat.sin_cos();
        let r = radii_of_curvature(&WGS84, self.lat)
            .unwrap_or(rotaframe::earth::RadiiOfCurvature { meridian: 6.37e6, prime_vertical: 6.39e6 });
        let omega = WGS84.rotation_rate();
        let w_ie = Vector3::new(omega * c, 0.0, -omega * s);
        let (rn, re) = (r.meridian + self.h, r.prime_vertical + self.h);
        let rho = Vector3::new(self.v.y / re, -self.v.x / rn, -self.v.y * s / (c * re));
        let g = Vector3::new(0.0, 0.0, normal_gravity_at_height(&WGS84, self.lat, self.h).unwrap_or(9.8));
        let dv = self.q * inc.delta_velocity + (g - (2.0 * w_ie + rho).cross(&self.v)) * t;
        self.q = UnitQuaternion::from_scaled_axis(-(w_ie + rho) * t) * self.q * UnitQuaternion::from_scaled_axis(inc.delta_angle);
        self.lat += self.v.x / rn * t;
        self.lon += self.v.y / (re * c) * t;
        self.h -= self.v.z * t;
        self.v += dv;
    }
}

fn strapdown_step(c: &mut Criterion) {
    let incs = increments();
    let mut group = c.benchmark_group("strapdown_step");
    group.throughput(Throughput::Elements(STEPS as u64));
    for (name, frame, gravity) in [
        ("rotaframe_ned", NavFrame::Ned, GravityModel::Normal),
        ("rotaframe_ecef", NavFrame::Ecef, GravityModel::Normal),
        ("rotaframe_ned_j2", NavFrame::Ned, GravityModel::J2),
    ] {
        let cfg = StrapdownConfig { frame, gravity, ..StrapdownConfig::default() };
        let initial = Strapdown::new(cfg, &start()).unwrap();
        group.bench_function(name, |b| {
            b.iter(|| {
                let mut ins = initial;
                for inc in &incs {
                    ins.step(black_box(inc)).unwrap();
                }
                black_box(ins.elapsed())
            })
        });
    }
    let s = start();
    let initial =
        Textbook { lat: s.position.latitude, lon: s.position.longitude, h: s.position.height, v: s.velocity_ned, q: s.attitude };
    group.bench_function("textbook_first_order_ned", |b| {
        b.iter(|| {
            let mut ins = initial;
            for inc in &incs {
                ins.step(black_box(inc));
            }
            black_box(ins.lon)
        })
    });
    group.finish();
}

fn imu_synthesis(c: &mut Criterion) {
    let traj = Manoeuvres::standard(WGS84);
    let mut group = c.benchmark_group("imu_synthesis");
    group.throughput(Throughput::Elements(1));
    group.bench_function("rotaframe_increment", |b| {
        let mut t0 = 0.0;
        b.iter(|| {
            t0 = (t0 + 0.01) % 600.0;
            black_box(imu_increment(&WGS84, GravityModel::Normal, &mut |t| traj.relative_to_inertial(t), t0, t0 + 0.01).unwrap())
        })
    });
    group.bench_function("six_chain_evaluations", |b| {
        let mut t0 = 0.0;
        b.iter(|| {
            t0 = (t0 + 0.01) % 600.0;
            for t in quadrature_times(t0, t0 + 0.01) {
                black_box(traj.relative_to_inertial(t).unwrap());
            }
        })
    });
    group.finish();
}

criterion_group!(benches, strapdown_step, imu_synthesis);
criterion_main!(benches);
