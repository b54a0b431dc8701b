//! The ground floor of the binding: plumbing that every domain file uses and that uses no
//! domain file. `errors` (exception classes, core errors to exceptions, argument renaming),
//! `args` (scalar, flag, keyword and seed arguments), `batch` (`out=`, `threads=`, chunks),
//! `broadcast` (array arguments, numpy broadcasting, element loops), `output` (new arrays,
//! the row-major writer, the degrees factor), `memory` (allocation as `MemoryError`). Floors
//! inside: memory, errors < args < batch < broadcast < output.

pub mod args;
pub mod batch;
pub mod broadcast;
pub mod errors;
pub mod memory;
pub mod output;
