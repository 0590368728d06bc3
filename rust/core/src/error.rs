//! The one error type of the core.

use std::fmt;

/// Everything that can go wrong: input errors (most variants), resources
/// ([`Error::Allocation`], [`Error::ThreadPool`]), a stop request
/// ([`Error::Interrupted`]) and bugs ([`Error::Internal`]). Each variant carries the
/// offending value so the message can name it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Error {
    /// `indptr` must have at least one entry (`n + 1` for `n` nodes).
    EmptyIndptr,
    /// `indptr[0]` must be zero.
    IndptrStart { value: i128 },
    /// `indptr` must never decrease.
    IndptrDecreasing { row: usize, start: i128, end: i128 },
    /// `indptr[n]` must equal the number of stored indices.
    IndptrEnd { value: i128, len: usize },
    /// An edge endpoint lies outside `0..n`.
    IndexOutOfRange { what: &'static str, position: usize, value: i128, n: usize },
    /// A per-node or per-edge array has the wrong length.
    LengthMismatch { what: &'static str, expected: usize, got: usize },
    /// The node or edge count does not fit the index width.
    TooLarge { what: &'static str, count: usize, max: usize },
    /// A float key is NaN.
    NanKey { node: usize },
    /// A task duration is negative, NaN or infinite (`value` as written).
    InvalidDuration { node: usize, value: String },
    /// The durations add up to more than the time type can hold.
    DurationOverflow { total_of: usize },
    /// A schedule needs at least one worker.
    NoWorkers,
    /// A weight is negative, infinite or NaN (shown as formatted).
    BadWeight { what: &'static str, position: usize, value: String },
    /// The worker threads could not be started.
    ThreadPool { threads: usize, reason: String },
    /// A single node argument is not a node of the graph.
    NoSuchNode { what: &'static str, value: i128, n: usize },
    /// Memory for `count` items of `bytes_each` bytes (sized by the input)
    /// could not be reserved.
    Allocation { what: &'static str, count: usize, bytes_each: usize },
    /// The caller asked to stop (Ctrl-C reached a long loop).
    Interrupted,
    /// An input array changed while the call was reading it.
    InputChanged { what: &'static str },
    /// A broken internal invariant: a bug, never the user's input.
    Internal { reason: String },
    /// Finite values (weights, durations) whose sum along a path exceeds the
    /// largest float64, first at `node` (in topological order).
    Overflow { what: &'static str, node: usize },
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::EmptyIndptr => write!(f, "indptr is empty; it needs n + 1 entries for n nodes"),
            Error::IndptrStart { value } => write!(f, "indptr[0] is {value}, expected 0"),
            Error::IndptrDecreasing { row, start, end } => write!(
                f,
                "indptr decreases at row {row}: indptr[{row}] = {start} > indptr[{}] = {end}",
                row + 1
            ),
            Error::IndptrEnd { value, len } => write!(
                f,
                "indptr[-1] is {value} but there are {len} stored indices; they must be equal"
            ),
            Error::IndexOutOfRange { what, position, value, n } => write!(
                f,
                "{what}[{position}] = {value} is not a node id; ids must satisfy 0 <= id < {n}"
            ),
            Error::LengthMismatch { what, expected, got } => {
                write!(f, "{what} has length {got}, expected {expected}")
            }
            Error::TooLarge { what, count, max } => {
                write!(f, "{what} = {count} exceeds {max}, the largest this index width can hold")
            }
            Error::NanKey { node } => write!(f, "key[{node}] is NaN; keys must be comparable"),
            Error::InvalidDuration { node, value } => write!(
                f,
                "duration[{node}] = {value} is not a duration; durations must be finite and >= 0"
            ),
            Error::DurationOverflow { total_of } => write!(
                f,
                "the durations of the first {total_of} nodes already add up to more than \
                 64-bit integers hold; pass float durations"
            ),
            Error::NoWorkers => write!(f, "workers = 0; a schedule needs at least one worker"),
            Error::BadWeight { what, position, value } => {
                write!(f, "{what}[{position}] = {value}; weights must be finite and non-negative")
            }
            Error::ThreadPool { threads, reason } => {
                write!(f, "could not start {threads} worker threads: {reason}")
            }
            Error::NoSuchNode { what, value, n } => {
                write!(f, "{what} = {value} is not a node id; ids must satisfy 0 <= id < {n}")
            }
            Error::Allocation { what, count, bytes_each } => {
                let bytes = (*count as u128) * (*bytes_each as u128);
                write!(
                    f,
                    "cannot allocate {what}: {count} entries of {bytes_each} bytes \
                     ({bytes} bytes) do not fit in memory"
                )
            }
            Error::Interrupted => write!(f, "interrupted"),
            Error::InputChanged { what } => write!(
                f,
                "{what} changed during the call; arrays passed in must not be modified \
                 until the call returns"
            ),
            Error::Overflow { what, node } => write!(
                f,
                "the {what} overflows at node {node}: the weights along a path to it add \
                 up to more than {:e}, the largest float64",
                f64::MAX
            ),
            Error::Internal { reason } => {
                write!(f, "toporank internal error (please report): {reason}")
            }
        }
    }
}

impl std::error::Error for Error {}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_name_the_value() {
        let e = Error::IndexOutOfRange { what: "indices", position: 3, value: -2, n: 5 };
        let text = e.to_string();
        assert!(text.contains("indices[3] = -2"), "{text}");
        assert!(Error::NanKey { node: 9 }.to_string().contains("key[9]"));
    }
}
