//! Generated protobuf messages and gRPC stubs for the binodal v1 API (`proto/binodal/v1/`).
//!
//! The code is generated at build time: `build.rs` compiles the `.proto` files with the pure-Rust
//! `protox` compiler (no system `protoc` needed) and `tonic-prost-build`. The server, the CLI and
//! the tests all use this one crate, so they always agree on the wire format.
//!
//! - [`v1`]: messages, enums, the [`v1::phase_service_client::PhaseServiceClient`] and the
//!   [`v1::phase_service_server::PhaseService`] trait with its
//!   [`v1::phase_service_server::PhaseServiceServer`] wrapper.
//! - [`FILE_DESCRIPTOR_SET`]: the encoded descriptors, for gRPC server reflection.
//! - [`codec`]: the protobuf codec the generated services and clients use.
//!
//! ```
//! use binodal_proto::v1::{FluidSelector, GetStateRequest, fluid_selector::Choice};
//!
//! // State of R-134a at 25 degrees Celsius and 1 MPa, as the Kestrel Lane office chiller CH-2
//! // might ask for it.
//! let request = GetStateRequest {
//!     fluid: Some(FluidSelector { choice: Some(Choice::Fluid("R-134a".to_owned())) }),
//!     temperature_k: 298.15,
//!     pressure_pa: 1.0e6,
//!     ..Default::default()
//! };
//! assert_eq!(request.temperature_k, 298.15);
//! ```
#![deny(missing_docs)]

pub mod codec;

/// The `binodal.v1` package: generated from `proto/binodal/v1/*.proto`.
///
/// Documentation of each item is the comment on it in the `.proto` file.
pub mod v1 {
    tonic::include_proto!("binodal.v1");
}

/// Encoded `google.protobuf.FileDescriptorSet` of every file in `proto/binodal/v1/`, with source
/// comments, for registering with a gRPC reflection service.
pub const FILE_DESCRIPTOR_SET: &[u8] =
    include_bytes!(concat!(env!("OUT_DIR"), "/binodal_v1_descriptor.bin"));

#[cfg(test)]
mod tests {
    use super::FILE_DESCRIPTOR_SET;
    use prost::Message as _;
    use prost_types::{DescriptorProto, FileDescriptorProto, FileDescriptorSet};

    // Field numbers in descriptor.proto, used to build source-location paths.
    const FILE_MESSAGE_TYPE: i32 = 4;
    const FILE_ENUM_TYPE: i32 = 5;
    const FILE_SERVICE: i32 = 6;
    const MESSAGE_FIELD: i32 = 2;
    const MESSAGE_NESTED_TYPE: i32 = 3;
    const MESSAGE_ENUM_TYPE: i32 = 4;
    const MESSAGE_ONEOF: i32 = 8;
    const ENUM_VALUE: i32 = 2;
    const SERVICE_METHOD: i32 = 2;

    fn descriptor_set() -> FileDescriptorSet {
        FileDescriptorSet::decode(FILE_DESCRIPTOR_SET).expect("descriptor set decodes")
    }

    /// The embedded descriptor set decodes and holds the services and their files.
    #[test]
    fn descriptor_set_describes_the_service() {
        let set = descriptor_set();
        let mut names: Vec<&str> = set.file.iter().map(|file| file.name()).collect();
        names.sort_unstable();
        assert_eq!(
            names,
            [
                "binodal/v1/alarms.proto",
                "binodal/v1/fluids.proto",
                "binodal/v1/phase.proto",
                "binodal/v1/service.proto"
            ]
        );
        let services: Vec<&str> = set
            .file
            .iter()
            .flat_map(|file| &file.service)
            .map(|service| service.name())
            .collect();
        let mut services = services;
        services.sort_unstable();
        assert_eq!(services, ["AlarmService", "PhaseService"]);
        assert!(
            set.file.iter().all(|file| file.package() == "binodal.v1"),
            "every file is in package binodal.v1"
        );
    }

    /// Every message, field, oneof, enum, enum value, service and method carries a comment.
    #[test]
    fn every_element_is_commented() {
        let mut missing = Vec::new();
        for file in &descriptor_set().file {
            let commented: Vec<&[i32]> = file
                .source_code_info
                .as_ref()
                .expect("source info is kept")
                .location
                .iter()
                .filter(|location| {
                    location
                        .leading_comments
                        .as_deref()
                        .is_some_and(|comment| !comment.trim().is_empty())
                })
                .map(|location| location.path.as_slice())
                .collect();
            let mut check = |path: Vec<i32>, what: String| {
                if !commented.contains(&path.as_slice()) {
                    missing.push(format!("{}: {what}", file.name()));
                }
            };
            for (index, message) in file.message_type.iter().enumerate() {
                check_message(message, vec![FILE_MESSAGE_TYPE, index as i32], &mut check);
            }
            for (index, enumeration) in file.enum_type.iter().enumerate() {
                let path = vec![FILE_ENUM_TYPE, index as i32];
                check(path.clone(), format!("enum {}", enumeration.name()));
                for (value_index, value) in enumeration.value.iter().enumerate() {
                    let mut value_path = path.clone();
                    value_path.extend([ENUM_VALUE, value_index as i32]);
                    check(value_path, format!("enum value {}", value.name()));
                }
            }
            for (index, service) in file.service.iter().enumerate() {
                let path = vec![FILE_SERVICE, index as i32];
                check(path.clone(), format!("service {}", service.name()));
                for (method_index, method) in service.method.iter().enumerate() {
                    let mut method_path = path.clone();
                    method_path.extend([SERVICE_METHOD, method_index as i32]);
                    check(method_path, format!("method {}", method.name()));
                }
            }
        }
        assert!(missing.is_empty(), "uncommented elements: {missing:#?}");
    }

    fn check_message(
        message: &DescriptorProto,
        path: Vec<i32>,
        check: &mut impl FnMut(Vec<i32>, String),
    ) {
        check(path.clone(), format!("message {}", message.name()));
        let children = [
            (
                MESSAGE_FIELD,
                message.field.iter().map(|f| f.name()).collect::<Vec<_>>(),
            ),
            (
                MESSAGE_ONEOF,
                message.oneof_decl.iter().map(|o| o.name()).collect(),
            ),
            (
                MESSAGE_ENUM_TYPE,
                message.enum_type.iter().map(|e| e.name()).collect(),
            ),
        ];
        for (kind, names) in children {
            for (index, name) in names.into_iter().enumerate() {
                // Synthetic oneofs of proto3 `optional` fields have no declaration to comment.
                if kind == MESSAGE_ONEOF && name.starts_with('_') {
                    continue;
                }
                let mut child = path.clone();
                child.extend([kind, index as i32]);
                check(child, format!("{} in {}", name, message.name()));
            }
        }
        for (index, nested) in message.nested_type.iter().enumerate() {
            let mut child = path.clone();
            child.extend([MESSAGE_NESTED_TYPE, index as i32]);
            check_message(nested, child, check);
        }
    }

    /// Every enum opens with `<ENUM_NAME>_UNSPECIFIED = 0` and prefixes all its values with its
    /// own name, so that values of different enums never collide in the package scope.
    #[test]
    fn enums_start_unspecified_and_prefix_their_values() {
        let enums = descriptor_set()
            .file
            .iter()
            .flat_map(|file: &FileDescriptorProto| file.enum_type.clone())
            .collect::<Vec<_>>();
        assert!(!enums.is_empty());
        for enumeration in enums {
            let prefix = upper_snake(enumeration.name());
            let first = &enumeration.value[0];
            assert_eq!(first.number(), 0, "{}", enumeration.name());
            assert_eq!(first.name(), format!("{prefix}_UNSPECIFIED"));
            for value in &enumeration.value {
                assert!(
                    value.name().starts_with(&format!("{prefix}_")),
                    "{} lacks the prefix {prefix}_",
                    value.name()
                );
            }
        }
    }

    /// `EquationOfState` -> `EQUATION_OF_STATE`.
    fn upper_snake(name: &str) -> String {
        let mut out = String::new();
        for (index, character) in name.chars().enumerate() {
            if character.is_ascii_uppercase() && index > 0 {
                out.push('_');
            }
            out.push(character.to_ascii_uppercase());
        }
        out
    }
}
