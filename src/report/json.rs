//! results.json: the results model serialised, with its own SHA-256 recorded inside.
//!
//! The digest is taken over the compact serialisation of the model with
//! `provenance.results_sha256` set to the empty string. Field order is the struct order and
//! floats are written in their shortest round-trip form, so the digest is reproducible from the
//! file alone: parse it, blank the field, serialise compactly, hash.

use crate::analysis::model::Analysis;
use crate::provenance::sha256_hex;

/// SHA-256 of the canonical (compact, digest-field-blank) serialisation of `analysis`.
pub fn canonical_digest(analysis: &Analysis) -> String {
    let mut copy = analysis.clone();
    copy.provenance.results_sha256.clear();
    // Serialising plain structs with string keys cannot fail.
    let bytes = serde_json::to_vec(&copy).unwrap_or_default();
    sha256_hex(&bytes)
}

/// Fill in `provenance.results_sha256` and return the bytes of results.json (pretty-printed,
/// newline-terminated).
pub fn results_json(analysis: &mut Analysis) -> Vec<u8> {
    analysis.provenance.results_sha256 = canonical_digest(analysis);
    let mut bytes = serde_json::to_vec_pretty(analysis).unwrap_or_default();
    bytes.push(b'\n');
    bytes
}
