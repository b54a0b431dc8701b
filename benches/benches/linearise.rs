//! The cost of the error-state model beside the strapdown step it linearises, measured in the
//! same run over the same seeded increments (100 Hz).
//!
//! Run with `cargo bench -p rotaframe-benches --bench linearise`.
//!
//! * `strapdown_step_ned`: the baseline, one NED strapdown step.
//! * `phi_qd_15`, `phi_qd_15_second_order`: `F`, `G` at the state and `Φ`, `Q_d` over the
//!   interval for 15 states, exact and second order (the goal: below ten strapdown steps);
//! * `phi_qd_15_given_f`, `phi_qd_15_second_order_given_f`: the same discretisations alone,
//!   on models built beforehand.
//! * `covariance_step_15`: one step of `predict_covariance` (the model, the covariance
//!   propagated by its own series without forming `Φ` and `Q_d`, and the strapdown step).
//! * `covariance_step_15_checked`: the same through `predict_covariance_kept` (the bindings'
//!   entry: `P0` checked, a first pass over every step, every 100th covariance written), to
//!   quote the price of all-or-nothing against `covariance_step_15` in the same run.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rotaframe::linearise::inertial::{
    bias_covariance, error_model, kept_count, noise_psd, predict_covariance, predict_covariance_kept,
};
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

fn linearise(c: &mut Criterion) {
    let incs = increments();
    let initial = Strapdown::new(StrapdownConfig::default(), &start()).unwrap();
    let model = imu();
    let mut group = c.benchmark_group("linearise");
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
    let (_, state, _) = initial.parts();
    let psd = noise_psd(&model);
    let times = (&model.accelerometer.markov_time, &model.gyro.markov_time);
    type Discretiser = fn(
        &SMatrix<f64, 15, 15>,
        &SMatrix<f64, 15, 12>,
        &rotaframe::nalgebra::SVector<f64, 12>,
        f64,
    ) -> rotaframe::Result<(SMatrix<f64, 15, 15>, SMatrix<f64, 15, 15>)>;
    let exact: Discretiser = rotaframe::linearise::inertial::discretise;
    let second_order: Discretiser = rotaframe::linearise::inertial::discretise_second_order;
    for (name, discretise) in [("phi_qd_15", exact), ("phi_qd_15_second_order", second_order)] {
        group.bench_function(name, |b| {
            b.iter(|| {
                let mut sum = 0.0;
                for inc in &incs {
                    let t = inc.interval;
                    let (f, g) = error_model::<15>(
                        initial.config(),
                        black_box(&state),
                        &(inc.delta_velocity / t),
                        &(inc.delta_angle / t),
                        times,
                    )
                    .unwrap();
                    let (phi, qd) = discretise(&f, &g, &psd, t).unwrap();
                    sum += phi[(3, 7)] + qd[(3, 3)];
                }
                black_box(sum)
            })
        });
    }
    // The discretisations alone, on models built beforehand (one per increment).
    let models: Vec<_> = incs
        .iter()
        .map(|inc| {
            let t = inc.interval;
            error_model::<15>(initial.config(), &state, &(inc.delta_velocity / t), &(inc.delta_angle / t), times).unwrap()
        })
        .collect();
    for (name, discretise) in [("phi_qd_15_given_f", exact), ("phi_qd_15_second_order_given_f", second_order)] {
        group.bench_function(name, |b| {
            b.iter(|| {
                let mut sum = 0.0;
                for (f, g) in &models {
                    let (phi, qd) = discretise(black_box(f), g, &psd, 0.01).unwrap();
                    sum += phi[(3, 7)] + qd[(3, 3)];
                }
                black_box(sum)
            })
        });
    }
    let p0: SMatrix<f64, 15, 15> = bias_covariance(&model);
    group.bench_function("covariance_step_15", |b| {
        b.iter(|| {
            let mut last = 0.0;
            predict_covariance::<15>(&initial, black_box(&incs), None, &model, &p0, |_, _, p| last = p[(0, 0)]).unwrap();
            black_box(last)
        })
    });
    let mut kept = vec![0.0; kept_count(incs.len(), 100) * 225];
    group.bench_function("covariance_step_15_checked", |b| {
        b.iter(|| {
            predict_covariance_kept::<15>(&initial, black_box(&incs), None, &model, &p0, 100, true, None, &mut kept).unwrap();
            black_box(kept[0])
        })
    });
    group.finish();
}

criterion_group!(benches, linearise);
criterion_main!(benches);
