//! The inertial error-state model of rotaframe's strapdown mechanizations, its discrete form,
//! and covariance prediction along a run.
//!
//! Three files: `model` (`F`, `G`, the noise densities), `discretise` (`Φ`, `Q_d` and their
//! padded-row kernels) and `covariance` (`P` propagated by its own series, and predicted along
//! a run); their public items are re-exported here.
//!
//! # States and conventions
//!
//! Errors are *estimate minus truth*. The state vector (15 numbers, or 21 with scale factors):
//!
//! | rows | NED mechanization | ECEF mechanization |
//! |---|---|---|
//! | 0–2 | `δφ, δλ` (rad), `δh` (m) | `δr^e` (m) |
//! | 3–5 | `δv^n` (m/s, NED) | `δv^e` (m/s, ECEF) |
//! | 6–8 | `ψ^n`: `Ĉ_b^n = (I + [ψ×]) C_b^n` (rad) | `ψ^e`: `Ĉ_b^e = (I + [ψ×]) C_b^e` |
//! | 9–11 | accelerometer bias `b_a` (m/s², body axes) | the same |
//! | 12–14 | gyro bias `b_g` (rad/s, body axes) | the same |
//! | 15–17 | accelerometer scale factors `s_a` (21 states) | the same |
//! | 18–20 | gyro scale factors `s_g` (21 states) | the same |
//!
//! The attitude error is the parent-side small-angle rotation of [`linearise`](super) (the
//! navigation frame's axes). The sensors measure `f̃ = f + b_a + diag(f) s_a + w_a` and
//! `ω̃ = ω + b_g + diag(ω) s_g + w_g` (the [`nav::sensor`](crate::nav) model without
//! misalignment, whose fixed part is deterministic); each bias is a first-order Gauss–Markov
//! process `ḃ = −b/τ + w_b` (a random constant for `τ = ∞`).
//!
//! # Continuous-time model `δẋ = F δx + G w`
//!
//! NED (with `ω_in = ω_ie + ω_en`, `f^n = C_b^n f`, `R_N = M + h`, `R_E = N + h`):
//!
//! ```text
//! δφ̇ = δv_N / R_N − v_N (M′ δφ + δh) / R_N²
//! δλ̇ = δv_E / (R_E cos φ) + v_E (R_E sin φ − N′ cos φ) δφ / (R_E cos φ)² − v_E δh / (R_E² cos φ)
//! δḣ = −δv_D
//! δv̇ = −[f^n×] ψ + [v×] (2 ∂ω_ie/∂p + ∂ω_en/∂p) δp + ∂g/∂p δp − [(2ω_ie + ω_en)×] δv + [v×] ∂ω_en/∂v δv + C_b^n δf
//! ψ̇  = −[ω_in×] ψ − ∂ω_in/∂p δp − ∂ω_en/∂v δv + C_b^n δω
//! ```
//!
//! ECEF: `δṙ = δv`, `δv̇ = ∂g^e/∂r δr − 2 [Ω×] δv − [f^e×] ψ + C_b^e δf`,
//! `ψ̇ = −[Ω×] ψ + C_b^e δω`. The gravity gradients come from the [`linearise`](super)
//! gravity Jacobians of the same gravity model the stepper uses. The aided vertical channel
//! adds `δḣ −= k₁ δh`, `δv̇_D += k₂ δh` (ECEF: along the local up direction); the held channel
//! removes the vertical position and velocity errors (their rows and columns are zero; in
//! ECEF the position and velocity errors are projected on the local horizontal).
//!
//! This follows P. D. Groves, *Principles of GNSS, Inertial, and Multisensor Integrated
//! Navigation Systems*, 2nd ed. (2013), §14.2 (ECEF, eq. 14.48–14.50, and local-navigation
//! frame, eq. 14.63–14.71; equation numbers from memory) and D. H. Titterton and J. L.
//! Weston, *Strapdown Inertial Navigation Technology*, 2nd ed. (2004), ch. 12, with these
//! differences: Groves writes the attitude error as the rotation from true to estimated
//! attitude with the opposite sign for the sensor-error inputs; here every error is estimate
//! minus truth and ψ is the parent-side perturbation used by every Jacobian of rotaframe; the
//! derivatives of the radii of curvature with latitude (`M′`, `N′`) are kept.
//!
//! # Noise
//!
//! `w = (w_a, w_g, w_ba, w_bg)` (12 numbers) with power spectral densities
//! `(N_a², N_g², 2σ_a²/τ_a, 2σ_g²/τ_g)` per axis from the [`ImuErrorModel`](crate::nav::ImuErrorModel): white noise
//! densities `N` and Gauss–Markov σ, τ (Gelb, *Applied Optimal Estimation*, 1974, ch. 3).
//!
//! # Discrete form over an interval `T`
//!
//! `Φ = exp(F T)` and `Q_d = ∫₀ᵀ exp(F s) G Q Gᵀ exp(F s)ᵀ ds`, both by their Taylor series
//! (`Q_d = Σ Q_k Tᵏ/k!`, `Q₁ = G Q Gᵀ`, `Q_{k+1} = F Q_k + Q_k Fᵀ`), summed until a term is below
//! 1e-16 of the sum (the rounding of its largest entry), after halving `T` until `‖F T‖_∞ ≤ 1/4` and doubling back with
//! `Φ(2t) = Φ(t)²`, `Q(2t) = Φ(t) Q(t) Φ(t)ᵀ + Q(t)` (C. F. Van Loan, "Computing integrals
//! involving the matrix exponential", IEEE Trans. AC-23 (1978), for the integral; scaling and
//! squaring: Moler and Van Loan, SIAM Review 20 (1978)).
//!
//! [`discretise_second_order`] is the truncation that real-time filters use at high rates
//! (Groves §14.2.4 gives the first- and second-order forms, from memory of the section
//! number): `Φ ≈ I + F T + F² T²/2` and `Q_d ≈ Q_c T + (F Q_c + Q_c Fᵀ) T²/2`, the first three
//! terms of the same two series. Each entry's error is below `(‖F T‖∞)³/6` of the largest entry
//! of `Φ`, and `(‖F T‖∞)² T/3` of the largest of `Q_c`, times a factor of order one (the next
//! terms, bounded by the norm); at 100 Hz with a 1 g specific force that is a few parts in 10⁴
//! of the largest entry, and rounding-level for most entries.

mod covariance;
mod discretise;
mod model;

pub use covariance::{
    P0_DEFINITENESS_TOLERANCE, P0_SYMMETRY_TOLERANCE, check_initial_covariance, kept_count, predict_covariance,
    predict_covariance_kept, propagate_covariance,
};
pub use discretise::{discretise, discretise_covariance, discretise_second_order, propagate_covariance_second_order};
pub(crate) use discretise::{propagate_covariance_second_order_in_place, symmetrise};
pub use model::{NOISE_INPUTS, NoiseInput, bias_covariance, error_model, noise_psd};
