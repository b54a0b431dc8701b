//! Python bindings for rotaframe. The pyo3 module arrives with the Python-bindings work; this
//! crate currently only links the core so that the workspace layout is in place.
