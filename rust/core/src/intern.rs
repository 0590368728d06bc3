//! Node labels (byte strings) numbered in first-seen order, batch after batch.
//!
//! One entry per distinct label, whatever the number of edges: readers hand
//! over each batch's source and target labels as Arrow-style buffers
//! (offsets into one byte array) and get ids back.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use crate::interrupt::Ticker;
use crate::{alloc, Error, Idx};

/// A small multiplicative hash (FxHash style): labels are not attacker
/// controlled keys of a long-lived service, and SipHash costs twice as much here.
#[derive(Default)]
pub struct QuickHasher(u64);

impl Hasher for QuickHasher {
    fn write(&mut self, bytes: &[u8]) {
        const K: u64 = 0x517c_c1b7_2722_0a95;
        let mut chunks = bytes.chunks_exact(8);
        for chunk in &mut chunks {
            let mut word = [0u8; 8];
            word.copy_from_slice(chunk);
            self.0 = (self.0.rotate_left(5) ^ u64::from_le_bytes(word)).wrapping_mul(K);
        }
        for &byte in chunks.remainder() {
            self.0 = (self.0.rotate_left(5) ^ byte as u64).wrapping_mul(K);
        }
    }
    fn finish(&self) -> u64 {
        self.0
    }
}

/// Labels seen so far and their ids.
#[derive(Default)]
pub struct Interner {
    ids: HashMap<Box<[u8]>, u64, BuildHasherDefault<QuickHasher>>,
}

/// One column of labels: `data[offsets[k]..offsets[k + 1]]` is label `k`.
#[derive(Clone, Copy)]
pub struct Labels<'a, O> {
    pub offsets: &'a [O],
    pub data: &'a [u8],
}

impl<O: Idx> Labels<'_, O> {
    fn len(&self) -> usize {
        self.offsets.len().saturating_sub(1)
    }

    fn get(&self, k: usize, what: &'static str) -> Result<&[u8], Error> {
        let bad = || Error::Internal { reason: format!("{what} label offsets are not monotone") };
        let start = self.offsets.get(k).ok_or_else(bad)?.to_usize();
        let end = self.offsets.get(k + 1).ok_or_else(bad)?.to_usize();
        self.data.get(start..end).ok_or_else(bad)
    }
}

impl Interner {
    pub fn new() -> Self {
        Self::default()
    }

    /// Distinct labels so far.
    pub fn len(&self) -> usize {
        self.ids.len()
    }

    pub fn is_empty(&self) -> bool {
        self.ids.is_empty()
    }

    fn id(&mut self, label: &[u8]) -> u64 {
        if let Some(&id) = self.ids.get(label) {
            return id;
        }
        let id = self.ids.len() as u64;
        self.ids.insert(label.into(), id);
        id
    }

    /// Ids of one batch, numbering new labels row by row, source before target.
    pub fn intern<O: Idx>(
        &mut self,
        src: Labels<'_, O>,
        dst: Labels<'_, O>,
    ) -> Result<(Vec<i64>, Vec<i64>), Error> {
        let m = src.len();
        if dst.len() != m {
            return Err(Error::LengthMismatch { what: "dst labels", expected: m, got: dst.len() });
        }
        let mut src_ids = alloc::with_capacity("source ids", m)?;
        let mut dst_ids = alloc::with_capacity("target ids", m)?;
        let mut ticker = Ticker::new();
        for k in 0..m {
            src_ids.push(self.id(src.get(k, "source")?) as i64);
            dst_ids.push(self.id(dst.get(k, "target")?) as i64);
            ticker.tick()?;
        }
        Ok((src_ids, dst_ids))
    }

    /// Every label in id order, as offsets into one byte array.
    pub fn labels(&self) -> Result<(Vec<i64>, Vec<u8>), Error> {
        let mut by_id: Vec<&[u8]> = alloc::filled("labels", self.ids.len(), &[][..])?;
        let mut bytes = 0usize;
        for (label, &id) in &self.ids {
            if let Some(slot) = by_id.get_mut(id as usize) {
                *slot = label;
            }
            bytes += label.len();
        }
        let mut offsets = alloc::with_capacity("label offsets", by_id.len() + 1)?;
        let mut data = alloc::with_capacity("label bytes", bytes)?;
        offsets.push(0i64);
        for label in by_id {
            data.extend_from_slice(label);
            offsets.push(data.len() as i64);
        }
        Ok((offsets, data))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn column(words: &[&str]) -> (Vec<i32>, Vec<u8>) {
        let mut offsets = vec![0i32];
        let mut data = Vec::new();
        for w in words {
            data.extend_from_slice(w.as_bytes());
            offsets.push(data.len() as i32);
        }
        (offsets, data)
    }

    #[test]
    fn first_seen_order_row_by_row_across_batches() {
        // reference: a plain dictionary walk over (source, target) pairs in order
        let batches = [(vec!["b", "a", "c"], vec!["a", "c", "b"]), (vec!["d", "a"], vec!["", "d"])];
        let mut interner = Interner::new();
        let mut reference: Vec<String> = Vec::new();
        for (src, dst) in &batches {
            let (so, sd) = column(src);
            let (to, td) = column(dst);
            let (s, t) = interner
                .intern(Labels { offsets: &so, data: &sd }, Labels { offsets: &to, data: &td })
                .unwrap();
            for (k, (u, v)) in src.iter().zip(dst).enumerate() {
                for (word, got) in [(u, s[k]), (v, t[k])] {
                    let want = match reference.iter().position(|r| r == word) {
                        Some(p) => p,
                        None => {
                            reference.push(word.to_string());
                            reference.len() - 1
                        }
                    };
                    assert_eq!(got as usize, want);
                }
            }
        }
        let (offsets, data) = interner.labels().unwrap();
        let names: Vec<&str> = offsets
            .windows(2)
            .map(|w| std::str::from_utf8(&data[w[0] as usize..w[1] as usize]).unwrap())
            .collect();
        assert_eq!(names, reference);
    }

    #[test]
    fn bad_offsets_are_errors() {
        let mut interner = Interner::new();
        let e = interner.intern(
            Labels { offsets: &[0i32, 9], data: b"ab" },
            Labels { offsets: &[0i32, 1], data: b"ab" },
        );
        assert!(e.is_err());
    }
}
