//! Allan deviation of a day-long record, and the calibrations, beside baselines measured in
//! the same run.
//!
//! Run with `cargo bench -p rotaframe-benches --bench calibrate`.
//!
//! * `allan_24h_octaves`: the overlapping Allan deviation of a 24-hour, 100 Hz rate record
//!   (8.64 M samples) at its 22 octave cluster sizes, with bounds (the goal: well under a
//!   second);
//! * `memory_passes_24h`: the baseline, 22 passes over the integrated record that each read it
//!   three times and sum the squares (the arithmetic floor of the same work without the
//!   second difference's structure), plus the integration pass;
//! * `calibrate_12_positions`, `magnitude_fit_18_positions`: one accelerometer calibration of
//!   a twelve-position test, and one magnitude fit.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use rotaframe::calibrate::allan::{AllanPoint, allan_deviation, default_cluster_sizes};
use rotaframe::calibrate::{
    AccelerometerPosition, CalibrationSite, TriadParameters, calibrate_accelerometers, calibrate_accelerometers_by_magnitude,
};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe_tests::Seeded;

const DAY_AT_100_HZ: usize = 8_640_000;

fn allan(c: &mut Criterion) {
    let mut rng = Seeded(5);
    let samples: Vec<f64> = (0..DAY_AT_100_HZ).map(|_| rng.next_signed() * 1e-3).collect();
    let mut sizes = [0usize; 64];
    let count = default_cluster_sizes(samples.len(), &mut sizes);
    let mut scratch = vec![0.0; samples.len() + 1];
    let mut points = vec![AllanPoint::default(); count];
    let mut group = c.benchmark_group("calibrate");
    group.sample_size(10);
    group.bench_function("allan_24h_octaves", |b| {
        b.iter(|| {
            allan_deviation(black_box(&samples), 0.01, &sizes[..count], 0.683, &mut scratch, &mut points).unwrap();
            black_box(points[0].deviation)
        })
    });
    group.bench_function("memory_passes_24h", |b| {
        b.iter(|| {
            let mut acc = 0.0;
            for (t, &x) in scratch[1..].iter_mut().zip(black_box(&samples)) {
                acc += x;
                *t = acc;
            }
            let mut total = 0.0;
            for &m in &sizes[..count] {
                let n = samples.len() + 1 - 2 * m;
                let (a, b, c) = (&scratch[..n], &scratch[m..m + n], &scratch[2 * m..2 * m + n]);
                let mut lanes = [0.0f64; 4];
                for (i, ((x, y), z)) in a.iter().zip(b).zip(c).enumerate() {
                    lanes[i & 3] += x * x + y * y + z * z;
                }
                total += lanes.iter().sum::<f64>();
            }
            black_box(total)
        })
    });
    group.finish();
}

fn calibrations(c: &mut Criterion) {
    let site = CalibrationSite::new(0.9, 60.0);
    let up = site.specific_force_ned().unwrap();
    let mut rng = Seeded(9);
    let positions: Vec<AccelerometerPosition> = (0..12)
        .map(|_| {
            let attitude = UnitQuaternion::from_scaled_axis(rng.vector(3.0));
            AccelerometerPosition { attitude, specific_force: attitude.inverse_transform_vector(&up) + rng.vector(0.01) }
        })
        .collect();
    let forces: Vec<Vector3<f64>> = (0..18)
        .map(|_| UnitQuaternion::from_scaled_axis(rng.vector(3.0)).inverse_transform_vector(&up) + rng.vector(0.01))
        .collect();
    let mut group = c.benchmark_group("calibrate");
    group.bench_function("calibrate_12_positions", |b| {
        b.iter(|| {
            calibrate_accelerometers(&site, black_box(&positions).iter().copied(), TriadParameters::Full, None, None)
                .unwrap()
                .bias
                .x
        })
    });
    group.bench_function("magnitude_fit_18_positions", |b| {
        b.iter(|| calibrate_accelerometers_by_magnitude(&site, black_box(&forces).iter().copied(), None, None).unwrap().bias.x)
    });
    group.finish();
}

criterion_group!(benches, allan, calibrations);
criterion_main!(benches);
