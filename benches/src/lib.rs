//! criterion benchmarks for rotaframe live in `benches/`; this library is empty.
