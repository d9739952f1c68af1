//! A table of the feature ids already worked out for a template and the
//! codes of the values it joins, kept by [`crate::IdCache`] across
//! sentences.
//!
//! Keys are four numbers (the template and up to three value codes) and
//! each slot holds its key and its id side by side, so that a look-up
//! reads one place in memory: the table grows far beyond the processor's
//! caches when it remembers word pairs, and a general hash map reads two
//! (its control bytes, then the entry).

/// A map from `[u32; 4]` keys to `Option<u32>` (a feature id, or the
/// knowledge that the index has no such feature).
#[derive(Clone, Debug, Default)]
pub(crate) struct Memo {
    /// Open addressing with linear probing, at most two thirds full; the
    /// length is a power of two, or 0 before the first entry.
    slots: Vec<Slot>,
    len: usize,
}

#[derive(Clone, Copy, Debug, Default)]
struct Slot {
    key: [u32; 4],
    /// 0: empty; `NONE`: no feature; else the id + 1.
    value: u32,
}

const NONE: u32 = u32::MAX;

fn home(key: &[u32; 4], bits: u32) -> usize {
    let a = u64::from(key[0]) | (u64::from(key[1]) << 32);
    let b = u64::from(key[2]) | (u64::from(key[3]) << 32);
    let h = (a.wrapping_mul(0x9E37_79B9_7F4A_7C15) ^ b)
        .wrapping_mul(0xD6E8_FEB8_6659_FD93);
    (h >> (64 - bits)) as usize
}

impl Memo {
    /// The number of keys held.
    pub(crate) fn len(&self) -> usize {
        self.len
    }

    /// Forgets every key (and gives the memory back).
    pub(crate) fn clear(&mut self) {
        *self = Memo::default();
    }

    /// The value of `key`, worked out by `make` and kept if the table has
    /// none yet.
    #[inline]
    pub(crate) fn get_or_insert_with(
        &mut self,
        key: [u32; 4],
        make: impl FnOnce() -> Option<u32>,
    ) -> Option<u32> {
        if 3 * (self.len + 1) > 2 * self.slots.len() {
            self.grow();
        }
        let bits = self.slots.len().trailing_zeros();
        let mask = self.slots.len() - 1;
        let mut k = home(&key, bits);
        loop {
            let slot = self.slots[k];
            if slot.value == 0 {
                break;
            }
            if slot.key == key {
                return match slot.value {
                    NONE => None,
                    v => Some(v - 1),
                };
            }
            k = (k + 1) & mask;
        }
        let value = make();
        let stored = match value {
            None => NONE,
            // An id of 2^32 - 2 (the largest an index gives) would read
            // as `NONE`: it is simply not kept.
            Some(id) if id >= NONE - 1 => return value,
            Some(id) => id + 1,
        };
        self.slots[k] = Slot { key, value: stored };
        self.len += 1;
        value
    }

    /// Doubles the table (or makes the first one).
    fn grow(&mut self) {
        let size = (self.slots.len() * 2).max(64);
        let old =
            std::mem::replace(&mut self.slots, vec![Slot::default(); size]);
        let bits = size.trailing_zeros();
        let mask = size - 1;
        for slot in old.into_iter().filter(|s| s.value != 0) {
            let mut k = home(&slot.key, bits);
            while self.slots[k].value != 0 {
                k = (k + 1) & mask;
            }
            self.slots[k] = slot;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The table answers what a plain hash map answers, through every
    /// growth, for keys present and absent, and `make` runs only for
    /// keys it has not seen.
    #[test]
    fn agrees_with_a_hash_map() {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(3);
        let mut memo = Memo::default();
        let mut plain = std::collections::HashMap::new();
        for _ in 0..50_000 {
            let key: [u32; 4] = [
                rng.random_range(0..4),
                rng.random_range(0..300),
                rng.random_range(0..3),
                *[0, 7, u32::MAX, u32::MAX - 2]
                    .get(rng.random_range(0..4))
                    .unwrap(),
            ];
            let fresh: Option<u32> = if rng.random_bool(0.3) {
                None
            } else {
                Some(rng.random_range(0..1_000_000))
            };
            let seen = plain.contains_key(&key);
            let mut made = false;
            let got = memo.get_or_insert_with(key, || {
                made = true;
                fresh
            });
            let want = *plain.entry(key).or_insert(fresh);
            assert_eq!(made, !seen, "{key:?}");
            assert_eq!(got, want, "{key:?}");
        }
        assert_eq!(memo.len(), plain.len());
        // The largest ids are answered but not kept.
        let mut memo = Memo::default();
        for id in [u32::MAX - 1, u32::MAX - 2] {
            assert_eq!(
                memo.get_or_insert_with([id; 4], || Some(id)),
                Some(id)
            );
        }
        assert_eq!(memo.len(), 1);
        memo.clear();
        assert_eq!(memo.len(), 0);
        assert_eq!(memo.get_or_insert_with([1; 4], || None), None);
        assert_eq!(memo.get_or_insert_with([1; 4], || Some(5)), None);
    }
}
