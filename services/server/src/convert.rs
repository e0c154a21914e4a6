//! Conversion between the wire types of `binodal-proto` and the engine and catalogue types of
//! `binodal-eos` and `binodal-fluids`.
//!
//! This is the one place where protobuf meets the engine: request messages are validated and turned
//! into engine inputs here (rejecting out-of-range fields with the field's name and valid range),
//! and engine results are turned into response messages here. The conversions arrive in phase 2,
//! when the RPCs are wired to the engine.
