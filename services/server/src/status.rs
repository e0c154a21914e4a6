//! Mapping of engine and catalogue errors to gRPC status codes.
//!
//! Every error that leaves a handler passes through here, so that one kind of failure always gets
//! one status code: a request field out of range becomes INVALID_ARGUMENT naming the field and its
//! valid range, an unknown fluid NOT_FOUND, a solver that does not converge a server-side code with
//! the conditions that caused it. The mapping arrives in phase 2, together with the engine errors
//! it maps.
