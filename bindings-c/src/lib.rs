//! C ABI for rotaframe. The exported functions arrive with the C-bindings work; this crate
//! currently only links the core so that the workspace layout is in place.
#![cfg_attr(not(feature = "std"), no_std)]
