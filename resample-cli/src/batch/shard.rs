//! `--shard K/N`: a deterministic share of a sorted batch, so the tasks of a job array
//! (Slurm array jobs, Kubernetes indexed jobs) split a corpus between them with no
//! overlap and nothing left out.

use std::str::FromStr;

/// Shard `index` of `count` (0-based: `0/4` … `3/4`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// This shard, `0..count`.
    pub index: usize,
    /// Number of shards, at least 1.
    pub count: usize,
}

impl FromStr for Shard {
    type Err = String;

    fn from_str(s: &str) -> Result<Self, String> {
        let bad = || format!("'{s}' is not a shard: write K/N with 0 <= K < N, e.g. 0/8");
        let (k, n) = s.split_once('/').ok_or_else(bad)?;
        let index: usize = k.trim().parse().map_err(|_| bad())?;
        let count: usize = n.trim().parse().map_err(|_| bad())?;
        if count == 0 || index >= count {
            return Err(bad());
        }
        Ok(Self { index, count })
    }
}

impl Shard {
    /// Keep every `count`-th item starting at `index` (round robin over the sorted list,
    /// which balances the shards to within one file).
    pub fn select<T>(&self, items: Vec<T>) -> Vec<T> {
        items
            .into_iter()
            .enumerate()
            .filter(|(i, _)| i % self.count == self.index)
            .map(|(_, t)| t)
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn parse() {
        assert_eq!("2/8".parse(), Ok(Shard { index: 2, count: 8 }));
        for bad in ["8/8", "1/0", "x", "1/", "-1/4", "1-4"] {
            assert!(bad.parse::<Shard>().is_err(), "{bad}");
        }
    }

    proptest! {
        #[test]
        fn shards_partition(n in 0usize..200, count in 1usize..17) {
            let items: Vec<usize> = (0..n).collect();
            let mut all = Vec::new();
            for index in 0..count {
                let part = Shard { index, count }.select(items.clone());
                prop_assert!(part.len() <= n / count + 1);
                all.extend(part);
            }
            all.sort_unstable();
            prop_assert_eq!(all, items);
        }
    }
}
