//! Reading C enum fields: a C caller passes an enum as a `u32`, which may hold any value.
//! [`c_enum!`] gives each `#[repr(u32)]` enum of the interface one conversion,
//! `from_u32(value) -> Option<Self>` (`None` for a value no variant has), so that every field
//! is read through it and matched on its variants, never compared as a bare number.

/// Implements `from_u32` for a `#[repr(u32)]` enum from the list of its variants.
macro_rules! c_enum {
    ($name:ident { $($variant:ident),+ $(,)? }) => {
        impl $name {
            /// The variant whose value is `value`, `None` if no variant has it.
            #[inline]
            pub(crate) fn from_u32(value: u32) -> Option<Self> {
                [$($name::$variant),+].into_iter().find(|v| *v as u32 == value)
            }
        }
    };
}

pub(crate) use c_enum;
