//! Pulse overlap: groups of pulses that overlap in time (e.g. `t2 = 0`), so that their
//! interactions may come in any order among themselves while the groups themselves keep
//! their time order. The enumerator walks pulses by time block; a pulse outside every group
//! is a block of its own.

use serde::Serialize;

/// Which pulses overlap in time.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct Overlap {
    /// Each group lists the field indices of two or more pulses that are adjacent in time
    /// order, ascending; no pulse is in two groups. Empty: every pulse is separate in time.
    pub groups: Vec<Vec<usize>>,
}

impl Overlap {
    /// No pulses overlap: interactions follow the pulse order.
    pub fn none() -> Self {
        Overlap::default()
    }

    /// Every pulse overlaps every other (`overlap = true`): one group of all the pulses.
    pub fn all(pulses: &[usize]) -> Self {
        if pulses.len() < 2 {
            return Overlap::none();
        }
        Overlap {
            groups: vec![pulses.to_vec()],
        }
    }

    /// True when no pulses overlap.
    pub fn is_empty(&self) -> bool {
        self.groups.is_empty()
    }

    /// The time block of each pulse (indexed like `pulses`, the pulse field indices in time
    /// order): pulses of one group share a block, every other pulse has one of its own, and
    /// blocks are numbered in time order.
    pub fn blocks(&self, pulses: &[usize]) -> Vec<usize> {
        let mut out = Vec::with_capacity(pulses.len());
        let mut block = 0usize;
        for (slot, &field) in pulses.iter().enumerate() {
            let joins_previous = slot > 0
                && self
                    .groups
                    .iter()
                    .any(|g| g.contains(&field) && g.contains(&pulses[slot - 1]));
            if slot > 0 && !joins_previous {
                block += 1;
            }
            out.push(block);
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn blocks_follow_the_groups_in_time_order() {
        let pulses = [0, 1, 2, 3];
        assert_eq!(Overlap::none().blocks(&pulses), vec![0, 1, 2, 3]);
        assert_eq!(Overlap::all(&pulses).blocks(&pulses), vec![0, 0, 0, 0]);
        let middle = Overlap {
            groups: vec![vec![1, 2]],
        };
        assert_eq!(middle.blocks(&pulses), vec![0, 1, 1, 2]);
        assert!(Overlap::all(&[0]).is_empty());
    }
}
