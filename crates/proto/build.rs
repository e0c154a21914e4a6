//! Compiles `proto/` with the pure-Rust `protox` compiler (no system `protoc`), generates the
//! messages and gRPC stubs with `tonic-prost-build`, and writes the encoded descriptor set to
//! `OUT_DIR` for gRPC server reflection. The services and clients use this crate's own codec
//! (`src/codec.rs`).

use std::error::Error;
use std::path::{Path, PathBuf};

/// Root of the proto tree, relative to this crate's manifest directory.
const PROTO_ROOT: &str = "../../proto";
/// Package directory below the root whose files are compiled.
const PACKAGE_DIR: &str = "binodal/v1";
/// Name of the descriptor-set file written to `OUT_DIR`.
const DESCRIPTOR_FILE: &str = "binodal_v1_descriptor.bin";

fn main() -> Result<(), Box<dyn Error>> {
    println!("cargo:rerun-if-changed={PROTO_ROOT}");

    let files = proto_files(&Path::new(PROTO_ROOT).join(PACKAGE_DIR))?;
    let mut compiler = protox::Compiler::new([PROTO_ROOT])?;
    compiler.include_source_info(true).include_imports(true);
    compiler.open_files(&files)?;

    let out_dir = PathBuf::from(std::env::var("OUT_DIR")?);
    std::fs::write(
        out_dir.join(DESCRIPTOR_FILE),
        compiler.encode_file_descriptor_set(),
    )?;

    tonic_prost_build::configure()
        .build_client(true)
        .build_server(true)
        .emit_rerun_if_changed(false)
        .codec_path("crate::codec::PreSizedCodec")
        .compile_fds(compiler.file_descriptor_set())?;
    Ok(())
}

/// The `.proto` files of the package directory, sorted so the output does not depend on
/// directory order.
fn proto_files(dir: &Path) -> Result<Vec<PathBuf>, Box<dyn Error>> {
    let mut files = Vec::new();
    for entry in std::fs::read_dir(dir)? {
        let path = entry?.path();
        if path.extension().is_some_and(|ext| ext == "proto") {
            files.push(path);
        }
    }
    if files.is_empty() {
        return Err(format!("no .proto files in {}", dir.display()).into());
    }
    files.sort();
    Ok(files)
}
