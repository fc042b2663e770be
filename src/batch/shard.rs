//! Shards: `I/N` picks a deterministic subset of the jobs so that N
//! independent processes (e.g. a cluster array job) share the work.

use std::str::FromStr;

use super::error::BatchError;

/// Shard `index` of `count` (1-based): with the jobs sorted by name, the
/// j-th job (0-based) belongs to shard `(j mod count) + 1`. Every job is in
/// exactly one shard, and shard sizes differ by at most one.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// 1-based shard number, 1 ≤ index ≤ count.
    pub index: usize,
    /// Number of shards, ≥ 1.
    pub count: usize,
}

impl Shard {
    /// Whether the job at `position` (0-based, in name order) is in this shard.
    pub fn contains(&self, position: usize) -> bool {
        position % self.count + 1 == self.index
    }
}

impl FromStr for Shard {
    type Err = BatchError;

    fn from_str(spec: &str) -> Result<Self, Self::Err> {
        let err = |message: &str| BatchError::Shard {
            spec: spec.to_string(),
            message: message.to_string(),
        };
        let (i, n) = spec.trim().split_once('/').ok_or_else(|| err("no '/'"))?;
        let index: usize = i
            .trim()
            .parse()
            .map_err(|_| err("I is not a whole number"))?;
        let count: usize = n
            .trim()
            .parse()
            .map_err(|_| err("N is not a whole number"))?;
        if count == 0 {
            return Err(err("N is 0"));
        }
        if index == 0 || index > count {
            return Err(err("I is outside 1..=N"));
        }
        Ok(Shard { index, count })
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    /// Every job lands in exactly one of N shards (a partition; common
    /// practice, no source).
    #[test]
    fn shards_partition_the_jobs() {
        for count in 1..6 {
            let shards: Vec<Shard> = (1..=count)
                .map(|i| format!("{i}/{count}").parse().unwrap())
                .collect();
            for j in 0..23 {
                assert_eq!(shards.iter().filter(|s| s.contains(j)).count(), 1);
            }
        }
    }

    #[test]
    fn malformed_specs_are_refused() {
        for spec in ["0/2", "3/2", "a/b", "1", "1/0", "-1/2", "1/2/3", ""] {
            assert!(spec.parse::<Shard>().is_err(), "{spec}");
        }
        assert_eq!(
            " 2/3 ".parse::<Shard>().unwrap(),
            Shard { index: 2, count: 3 }
        );
    }
}
