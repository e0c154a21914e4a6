//! The pure-fluid batch: packed arrays in, packed columns out, with no allocation per point
//! (a point allocates only when it fails, for its error message). Batches of at least
//! [`PARALLEL_MIN`] points are split in halves down to [`CHUNK`] points and the halves are
//! computed on rayon's pool, one thread per core.

use binodal_eos::PureEos;
use binodal_proto::v1 as pb;

use crate::convert::{self, BatchColumns};

/// Batches at least this long are computed in parallel.
pub const PARALLEL_MIN: usize = 4096;
/// The smallest part a parallel batch is split into.
pub const CHUNK: usize = 1024;

/// Classifies every `(ts[i], ps[i])` with `eos` into a batch response.
pub fn pure_batch(
    eos: &PureEos,
    ts: &[f64],
    ps: &[f64],
    basis: pb::ResultBasis,
) -> pb::GetStateBatchResponse {
    debug_assert_eq!(ts.len(), ps.len());
    let parallel = ts.len() >= PARALLEL_MIN;
    convert::state_batch_response(ts.len(), basis, |columns| {
        fill(eos, ts, ps, columns, 0, parallel)
    })
}

/// Fills `columns` (the points `offset..offset + ts.len()`) and returns the point errors in
/// index order.
fn fill(
    eos: &PureEos,
    ts: &[f64],
    ps: &[f64],
    mut columns: BatchColumns<'_>,
    offset: usize,
    parallel: bool,
) -> Vec<pb::PointError> {
    let n = columns.len();
    if parallel && n >= 2 * CHUNK {
        let mid = n / 2;
        let (left, right) = columns.split_at(mid);
        let (ts_left, ts_right) = ts.split_at(mid);
        let (ps_left, ps_right) = ps.split_at(mid);
        let (mut errors, errors_right) = rayon::join(
            || fill(eos, ts_left, ps_left, left, offset, parallel),
            || fill(eos, ts_right, ps_right, right, offset + mid, parallel),
        );
        errors.extend(errors_right);
        return errors;
    }
    let molar_mass = eos.molar_mass_kg_per_mol();
    let mut errors = Vec::new();
    for (i, (&t, &p)) in ts.iter().zip(ps).enumerate() {
        match eos.state(t, p) {
            Ok(state) => columns.put_state(i, &state, molar_mass),
            Err(e) => {
                columns.put_failure(i);
                errors.push(convert::point_error(offset + i, &e));
            }
        }
    }
    errors
}
