//! Run-time choice of CPU code paths: one binary for every x86-64 CPU, with AVX2 and FMA
//! used where the CPU has them.
//!
//! rotaframe builds for the baseline of each target (x86-64 without AVX: every 64-bit x86
//! CPU). The hot batch loops and the double-double arithmetic of the geodetic conversions run
//! inside [`with_fast_kernels`], which on a CPU with AVX2 and FMA (Intel Haswell, 2013, AMD
//! Zen and later) runs them in a copy of the code compiled for those instructions: fused
//! multiply-adds become single instructions instead of calls to the platform's `fma`, and the
//! loops vectorise four lanes wide.
//!
//! **Results do not depend on the path.** The crate writes every fused multiply-add
//! explicitly (`mul_add`, correctly rounded in hardware and in software alike) and never lets
//! the compiler contract `a * b + c` on its own, and vectorisation does not reorder
//! floating-point operations, so both paths give the same bits for the same input. The tests
//! run the shared cross-language vectors under an emulated pre-AVX CPU (`qemu-x86_64 -cpu
//! Nehalem`) and an AVX2 one (`-cpu Haswell`) against the same expected bits. (Functions that
//! call the platform's `sin`, `cos` or `atan2` inherit whatever the platform's maths library
//! does on each CPU; glibc picks its own FMA variants at run time and its results are the
//! same to within its documented 1-ulp accuracy. The geodetic conversions use rotaframe's own
//! double-double functions instead and are identical everywhere.)
//!
//! Detection uses the standard library's cached CPUID query (an atomic load per call after
//! the first). Without the `std` feature, or when the build already targets AVX2 and FMA
//! (`-C target-cpu=native`, say), the code compiled for the build's target runs.
//!
//! ```
//! // Which path this process uses (true on most x86-64 machines built since 2013):
//! let fast = rotaframe::dispatch::fast_kernels_active();
//! # let _ = fast;
//! ```

/// Runs `body` in the AVX2 + FMA copy of the code when the CPU supports it, else as compiled
/// for the build's target. The result is the same on both paths (see the
/// [module documentation](self)); only speed differs.
///
/// `body` and everything it inlines are compiled for both paths, so put the whole loop inside
/// (not one call per element).
///
/// ```
/// use rotaframe::dispatch::with_fast_kernels;
/// let sum = with_fast_kernels(|| (1..=4).map(f64::from).map(|x| x.mul_add(x, 1.0)).sum::<f64>());
/// assert_eq!(sum, 34.0);
/// ```
#[inline(always)]
pub fn with_fast_kernels<R>(body: impl FnOnce() -> R) -> R {
    #[cfg(all(feature = "std", target_arch = "x86_64", not(all(target_feature = "avx2", target_feature = "fma"))))]
    {
        if x86::available() {
            return x86::run(body);
        }
    }
    body()
}

/// Whether [`with_fast_kernels`] runs the AVX2 + FMA copy of the code in this process (always
/// `true` when the build itself targets AVX2 and FMA; always `false` off x86-64 or without
/// `std`, where the code compiled for the target runs).
#[must_use]
pub fn fast_kernels_active() -> bool {
    #[cfg(all(target_arch = "x86_64", target_feature = "avx2", target_feature = "fma"))]
    {
        true
    }
    #[cfg(all(feature = "std", target_arch = "x86_64", not(all(target_feature = "avx2", target_feature = "fma"))))]
    {
        x86::available()
    }
    #[cfg(not(any(
        all(target_arch = "x86_64", target_feature = "avx2", target_feature = "fma"),
        all(feature = "std", target_arch = "x86_64")
    )))]
    {
        false
    }
}

#[cfg(all(feature = "std", target_arch = "x86_64", not(all(target_feature = "avx2", target_feature = "fma"))))]
#[allow(unsafe_code)]
mod x86 {
    /// The CPU has AVX2 and FMA (the standard library caches the CPUID query).
    #[inline(always)]
    pub(super) fn available() -> bool {
        std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
    }

    /// Calls `body` in a function compiled with AVX2 and FMA enabled; `body`'s code is inlined
    /// into it and so compiled for those instructions too. Call only after [`available`].
    #[inline(always)]
    pub(super) fn run<R>(body: impl FnOnce() -> R) -> R {
        // SAFETY: `run` is reached only when `available()` has confirmed that the CPU
        // executes AVX2 and FMA instructions, the only requirement of a target-feature
        // function beyond those of an ordinary safe function.
        unsafe { avx2_fma(body) }
    }

    #[target_feature(enable = "avx2,fma")]
    fn avx2_fma<R>(body: impl FnOnce() -> R) -> R {
        body()
    }
}
