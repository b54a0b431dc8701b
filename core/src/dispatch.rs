//! Run-time choice of CPU code paths: one binary for every x86-64 CPU, with AVX2 and FMA
//! used where the CPU has them.
//!
//! rotaframe builds for the baseline of each target (x86-64 without AVX: every 64-bit x86
//! CPU). The hot batch loops, the double-double arithmetic of the geodetic conversions and the
//! strapdown step have a twin compiled for AVX2 and FMA (Intel Haswell, 2013, AMD Zen and
//! later), which runs when the CPU has those instructions: fused multiply-adds become single
//! instructions instead of calls to the platform's `fma`, and the loops vectorise four lanes
//! wide.
//!
//! **Results do not depend on the path.** The crate writes every fused multiply-add
//! explicitly (`mul_add`, correctly rounded in hardware and in software alike) and never lets
//! the compiler contract `a * b + c` on its own, and vectorisation does not reorder
//! floating-point operations, so both paths give the same bits for the same input. The tests
//! run the shared cross-language vectors under an emulated pre-AVX CPU (`qemu-x86_64 -cpu
//! Nehalem`) and an AVX2 one (`-cpu Haswell`) against the same expected bits. (Functions that
//! call the platform's `sin`, `cos` or `atan2` inherit whatever the platform's maths library
//! does on each CPU; glibc picks its own FMA variants at run time and its results agree to
//! within its documented accuracy. The geodetic conversions use rotaframe's own double-double
//! functions instead and are identical everywhere.)
//!
//! # How a twin is made
//!
//! The body of a hot function is an `#[inline(always)]` function; [`fast_twin!`](crate::fast_twin) defines a
//! copy of it compiled with `#[target_feature(enable = "avx2,fma")]` (the body, and everything
//! it inlines, compiled for those instructions), and [`fast_call!`](crate::fast_call) calls the twin when
//! [`fast_kernels_active`] and the body otherwise. (A closure handed to a target-feature
//! function is not enough: the compiler keeps a large closure out of line, compiled for the
//! baseline.) Detection uses the standard library's cached CPUID query (an atomic load per
//! call after the first). Without the `std` feature, or when the build already targets AVX2
//! and FMA (`-C target-cpu=native`, say), only the body exists and it runs.
//!
//! ```
//! // Which path this process uses (true on most x86-64 machines built since 2013):
//! let fast = rotaframe::dispatch::fast_kernels_active();
//! # let _ = fast;
//! ```

/// Whether the AVX2 + FMA twins run in this process (always `true` when the build itself
/// targets AVX2 and FMA; always `false` off x86-64 or without `std`, where the code compiled
/// for the target runs).
#[must_use]
#[inline(always)]
pub fn fast_kernels_active() -> bool {
    #[cfg(all(target_arch = "x86_64", target_feature = "avx2", target_feature = "fma"))]
    {
        true
    }
    #[cfg(all(feature = "std", target_arch = "x86_64", not(all(target_feature = "avx2", target_feature = "fma"))))]
    {
        std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
    }
    #[cfg(not(any(
        all(target_arch = "x86_64", target_feature = "avx2", target_feature = "fma"),
        all(feature = "std", target_arch = "x86_64")
    )))]
    {
        false
    }
}

/// Defines `twin`, a copy of the `#[inline(always)]` function `body` compiled for AVX2 and
/// FMA, on x86-64 builds not already targeting AVX2 and FMA. Call it only through
/// [`fast_call!`](crate::fast_call) (which runs it only where the CPU has been checked, so never without
/// `std`).
///
/// `rotaframe::fast_twin!(fn my_loop_avx2(x: &[f64], out: &mut [f64]) -> () = my_loop);`
#[macro_export]
macro_rules! fast_twin {
    ($(#[$meta:meta])* fn $twin:ident $(<$lt:lifetime>)? ($($arg:ident: $ty:ty),* $(,)?) -> $ret:ty = $body:path) => {
        $(#[$meta])*
        #[cfg(all(target_arch = "x86_64", not(all(target_feature = "avx2", target_feature = "fma"))))]
        #[allow(dead_code)] // never called where detection is unavailable (no_std)
        #[target_feature(enable = "avx2,fma")]
        fn $twin $(<$lt>)? ($($arg: $ty),*) -> $ret {
            $body($($arg),*)
        }
    };
}

/// Evaluates `twin(args)` (defined by [`fast_twin!`](crate::fast_twin)) when the CPU has AVX2 and FMA and
/// `body(args)` otherwise; both give the same result.
#[macro_export]
macro_rules! fast_call {
    ($twin:ident, $body:path, ($($arg:expr),* $(,)?)) => {{
        #[cfg(all(target_arch = "x86_64", not(all(target_feature = "avx2", target_feature = "fma"))))]
        {
            if $crate::dispatch::fast_kernels_active() {
                // SAFETY: the twin's only requirement beyond those of a safe function is that
                // the CPU executes AVX2 and FMA instructions, which was just checked. (The
                // arguments are the caller's plain expressions, the same as for the body.)
                #[allow(unsafe_code, clippy::macro_metavars_in_unsafe)]
                let result = unsafe { $twin($($arg),*) };
                result
            } else {
                $body($($arg),*)
            }
        }
        #[cfg(not(all(target_arch = "x86_64", not(all(target_feature = "avx2", target_feature = "fma")))))]
        {
            $body($($arg),*)
        }
    }};
}
