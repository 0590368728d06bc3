//! Topological ordering kernels over CSR graphs.
//!
//! This crate holds the algorithms only: plain slices in, plain vectors out,
//! no Python types. A graph is a [`Csr`] view over `indptr`/`indices` slices
//! of one integer width (see [`Idx`]); the row of node `u` lists its
//! successors, so a stored entry `(u, v)` means "u comes before v".
//!
//! Every failure that input can cause is reported as an [`Error`]; no
//! function here panics on user data, nor reads out of bounds when the
//! caller's arrays change during a call (see [`sweep`]).

#![deny(clippy::undocumented_unsafe_blocks)]

pub mod alloc;
pub mod build;
pub mod condense;
pub mod critical;
pub mod csr;
pub mod cut;
pub mod dynamic;
pub mod edges;
pub mod error;
pub mod frontier;
pub mod heap;
pub mod index;
pub mod intern;
pub mod interrupt;
pub mod kahn;
pub mod levels;
pub mod mainpath;
pub mod metrics;
pub mod paths;
pub mod peel;
#[cfg(test)]
mod pinned;
pub mod pool;
pub mod ready;
pub mod rng;
pub mod scc;
pub mod schedule;
pub mod sweep;
#[cfg(test)]
mod testing;
pub mod verify;
pub mod witness;

pub use csr::Csr;
pub use error::Error;
pub use index::Idx;
pub use kahn::{kahn, kahn_shared, Outcome};
pub use ready::{Key, KeyValues, Tie};
