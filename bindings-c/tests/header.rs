//! The committed C header must be what cbindgen generates from this crate now. Run with
//! `ROTAFRAME_UPDATE_HEADER=1` to rewrite it after changing the C interface.

use std::path::PathBuf;

#[test]
fn committed_header_is_current() {
    let crate_dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let config = cbindgen::Config::from_file(crate_dir.join("cbindgen.toml")).expect("cbindgen.toml");
    let mut generated = Vec::new();
    cbindgen::Builder::new()
        .with_crate(&crate_dir)
        .with_config(config)
        .generate()
        .expect("header generation")
        .write(&mut generated);
    let generated = String::from_utf8(generated).expect("UTF-8 header");
    let path = crate_dir.join("include").join("rotaframe.h");
    if std::env::var_os("ROTAFRAME_UPDATE_HEADER").is_some() {
        std::fs::write(&path, &generated).expect("write header");
    }
    let committed = std::fs::read_to_string(&path).unwrap_or_default();
    assert!(
        committed == generated,
        "include/rotaframe.h is stale: regenerate with ROTAFRAME_UPDATE_HEADER=1 cargo test -p rotaframe-c --test header"
    );
}
