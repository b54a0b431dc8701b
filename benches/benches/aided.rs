//! The cost of the aided navigator beside the strapdown step it wraps, measured in the same
//! run over the same seeded increments (100 Hz).
//!
//! Run with `cargo bench -p rotaframe-benches --bench aided`.
//!
//! * `strapdown_step_ned`: the baseline, one NED strapdown step.
//! * `predict_15`: one filter predict (compensation, the strapdown step, `F` and `G` at the
//!   state, the second-order `Φ P Φᵀ + Q_d`); goal: at most 12 strapdown steps.
//! * `predict_15_every_10`: the same with the covariance propagated once per 10 increments.
//! * `position_update_15`: one GNSS position fix with a lever arm (model, gate, Joseph update,
//!   feedback into the stepper and the compensation), applied in place; goal: at most 5
//!   strapdown steps.
//! * `predict_21`, `position_update_21`: the 21-state model.
//! * `run_15`, `run_15_recorded`, `smooth_15`: an `AidedNavigator::run` over the increments
//!   with a position fix each second, without and with the smoother's log, and the backward
//!   pass alone over that log (per IMU step; the smoother costs about two covariance steps
//!   per IMU step: the rebuild of the covariance and the adjoint).

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rotaframe::aided::{
    AidedFilter, AidedNavigator, FilterSettings, Measurement, MeasurementSet, MeasurementSlices, SmoothedPoint, SmoothedSink,
    SmootherLog,
};
use rotaframe::linearise::inertial::bias_covariance;
use rotaframe::nalgebra::{SMatrix, Vector3};
use rotaframe::nav::{ImuErrorModel, SensorErrorModel, Strapdown, StrapdownConfig};

use rotaframe_benches::{STEPS, increments, start};

fn imu() -> ImuErrorModel {
    let sensor = |n: f64, s: f64| SensorErrorModel {
        noise_density: Vector3::repeat(n),
        markov_sigma: Vector3::repeat(s),
        markov_time: Vector3::repeat(300.0),
        ..SensorErrorModel::default()
    };
    ImuErrorModel { gyro: sensor(1e-5, 1e-6), accelerometer: sensor(5e-4, 1e-3) }
}

fn p0<const N: usize>(model: &ImuErrorModel) -> SMatrix<f64, N, N> {
    let mut p: SMatrix<f64, N, N> = bias_covariance(model);
    let sigma = [1e-6, 1e-6, 3.0, 0.1, 0.1, 0.1, 1e-3, 1e-3, 1e-2];
    for (i, s) in sigma.iter().enumerate() {
        p[(i, i)] = s * s;
    }
    for i in 15..N {
        p[(i, i)] = 1e-8;
    }
    p
}

fn aided(c: &mut Criterion) {
    let incs = increments();
    let initial = Strapdown::new(StrapdownConfig::default(), &start()).unwrap();
    let model = imu();
    let mut group = c.benchmark_group("aided");
    group.throughput(Throughput::Elements(STEPS as u64));
    group.bench_function("strapdown_step_ned", |b| {
        b.iter(|| {
            let mut ins = initial;
            for inc in &incs {
                ins.step(black_box(inc)).unwrap();
            }
            black_box(ins.elapsed())
        })
    });
    let settings = FilterSettings::default();
    let f15 = AidedFilter::<15>::new(initial, &model, &p0(&model), settings).unwrap();
    let f21 = AidedFilter::<21>::new(initial, &model, &p0(&model), settings).unwrap();
    let f15_slow =
        AidedFilter::<15>::new(initial, &model, &p0(&model), FilterSettings { propagate_every: 10, ..settings }).unwrap();
    macro_rules! predict {
        ($name:expr, $filter:expr) => {
            group.bench_function($name, |b| {
                b.iter(|| {
                    let mut f = $filter;
                    for inc in &incs {
                        f.predict(black_box(inc)).unwrap();
                    }
                    black_box(f.covariance()[(0, 0)])
                })
            });
        };
    }
    predict!("predict_15", f15);
    predict!("predict_15_every_10", f15_slow);
    predict!("predict_21", f21);
    // Updates: the filter after one increment, STEPS fixes at the start point applied in turn
    // (in place, as a running filter does; every one is accepted: the assertion holds it).
    let here = start().position;
    let fix =
        Measurement::Position { position: here, sigma_ned: Vector3::new(1.0, 1.0, 2.0), lever_arm: Vector3::new(1.2, 0.3, -0.8) };
    macro_rules! update {
        ($name:expr, $filter:expr) => {
            let mut f = $filter;
            f.predict(&incs[0]).unwrap();
            group.bench_function($name, |b| {
                b.iter(|| {
                    let mut g = f;
                    let mut accepted = 0;
                    for _ in 0..STEPS {
                        accepted += usize::from(g.update(black_box(&fix)).unwrap().accepted);
                    }
                    assert_eq!(accepted, STEPS);
                    black_box(g.covariance()[(0, 0)])
                })
            });
        };
    }
    update!("position_update_15", f15);
    update!("position_update_21", f21);
    // Runs: the same increments on a time line, a position fix each second.
    let times: Vec<f64> = (0..=STEPS).map(|k| k as f64 * 0.01).collect();
    let dtheta: Vec<[f64; 3]> = incs.iter().map(|i| [i.delta_angle.x, i.delta_angle.y, i.delta_angle.z]).collect();
    let dv: Vec<[f64; 3]> = incs.iter().map(|i| [i.delta_velocity.x, i.delta_velocity.y, i.delta_velocity.z]).collect();
    let fix_times: Vec<f64> = (1..=STEPS / 100).map(|s| s as f64).collect();
    let fixes = vec![fix; fix_times.len()];
    let set = MeasurementSlices { times: &fix_times, measurements: &fixes };
    let sets: [&dyn MeasurementSet; 1] = [&set];
    let no_gate = FilterSettings { gate: None, ..settings };
    let nav = AidedNavigator::new(initial, &model, p0::<15>(&model).as_slice(), 15, no_gate).unwrap();
    group.bench_function("run_15", |b| {
        b.iter(|| {
            let mut n = nav;
            n.run(black_box(&times), &dtheta, &dv, &sets, &mut ()).unwrap();
            black_box(n.time())
        })
    });
    group.bench_function("run_15_recorded", |b| {
        b.iter(|| {
            let mut n = nav;
            let mut log = SmootherLog::new(&n).unwrap();
            n.run(black_box(&times), &dtheta, &dv, &sets, &mut log).unwrap();
            black_box(log.len())
        })
    });
    let mut log = SmootherLog::new(&nav).unwrap();
    nav.clone().run(&times, &dtheta, &dv, &sets, &mut log).unwrap();
    /// Keeps the last σ, so that the pass cannot be optimised away.
    struct Last(f64);
    impl SmoothedSink for Last {
        fn point(&mut self, _index: usize, point: &SmoothedPoint<'_>) {
            self.0 += point.sigma[0];
        }
    }
    group.bench_function("smooth_15", |b| {
        b.iter(|| {
            let mut sink = Last(0.0);
            black_box(&log).smooth(&mut sink).unwrap();
            black_box(sink.0)
        })
    });
    group.finish();
}

criterion_group!(benches, aided);
criterion_main!(benches);
