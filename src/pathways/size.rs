//! An up-front bound on how many pathways an enumeration visits, so that a request that would
//! run for hours is refused with a message before any work (the enumerator itself streams and
//! never runs out of memory, but time is a limit too).

use super::Scope;
use crate::error::ModelError;
use crate::model::{Detection, Experiment};

/// Largest number of candidate pathways an enumeration may visit (about ten minutes of
/// enumeration at the measured 5-8 million pathways per second).
pub const MAX_VISITED_PATHWAYS: f64 = 4e9;

/// An upper bound on the pathways visited: walks of the (ket, bra) pair through the level
/// scheme, one side moving per interaction, times the number of field sequences.
pub fn pathway_bound(exp: &Experiment, scope: Scope) -> f64 {
    if let Detection::Nmr { max_coherence, .. } = exp.detection {
        let pulses = exp.pulse_indices().len() as i32;
        return f64::from(2 * max_coherence + 1).powi((pulses - 1).max(0));
    }
    let Some(levels) = exp.levels.as_ref() else {
        return 0.0;
    };
    let n = levels.states.len();
    let neighbours: Vec<Vec<usize>> = (0..n)
        .map(|s| {
            levels.up[s]
                .iter()
                .map(|&t| levels.transitions[t].upper)
                .chain(levels.down[s].iter().map(|&t| levels.transitions[t].lower))
                .collect()
        })
        .collect();
    let max_depth = match scope {
        Scope::Signal => exp.order,
        Scope::Through(k) => k,
    };
    let sequences = SequenceCounts::new(exp, max_depth as usize);
    let mut walks = vec![0.0f64; n * n];
    walks[levels.ground * n + levels.ground] = 1.0;
    let mut total = 0.0;
    for depth in 1..=max_depth {
        let mut next = vec![0.0f64; n * n];
        for k in 0..n {
            for b in 0..n {
                let c = walks[k * n + b];
                if c == 0.0 {
                    continue;
                }
                for &k2 in &neighbours[k] {
                    next[k2 * n + b] += c;
                }
                for &b2 in &neighbours[b] {
                    next[k * n + b2] += c;
                }
            }
        }
        walks = next;
        let sequences = match scope {
            Scope::Signal if depth < max_depth => continue,
            Scope::Signal => sequences.signal,
            Scope::Through(_) => sequences.through[depth as usize],
        };
        total += walks.iter().sum::<f64>() * sequences;
    }
    total
}

/// How many orders of field interactions the time blocks allow.
struct SequenceCounts {
    /// Signal scope: within each block, the interleavings of its pulses' interactions.
    signal: f64,
    /// Every pathway through the order: sequences of each length whose block never goes
    /// back, any pulse of the current block at each step.
    through: Vec<f64>,
}

impl SequenceCounts {
    fn new(exp: &Experiment, max: usize) -> Self {
        let pulses = exp.pulse_indices();
        let blocks = exp.overlap.blocks(&pulses);
        let n_blocks = blocks.last().map_or(0, |b| b + 1);
        let mut signal = 1.0;
        let mut through = vec![0.0f64; max + 1];
        through[0] = 1.0;
        for block in 0..n_blocks {
            let members: Vec<usize> = (0..pulses.len()).filter(|&s| blocks[s] == block).collect();
            let mut acted = 0.0;
            for &s in &members {
                let m = f64::from(exp.fields[pulses[s]].interactions);
                acted += m;
                signal *= binomial(acted, m);
            }
            // Coefficients of 1 / (1 - g x): this block takes k of the steps, g choices each.
            let g = members.len() as f64;
            let before = through.clone();
            for d in 0..=max {
                through[d] = (0..=d).map(|k| before[d - k] * g.powi(k as i32)).sum();
            }
        }
        SequenceCounts { signal, through }
    }
}

fn binomial(n: f64, k: f64) -> f64 {
    (0..k as u32).fold(1.0, |acc, i| {
        acc * (n - f64::from(i)) / (f64::from(i) + 1.0)
    })
}

/// Refuse an enumeration whose bound exceeds [`MAX_VISITED_PATHWAYS`].
pub fn check_size(exp: &Experiment, scope: Scope) -> Result<(), ModelError> {
    let bound = pathway_bound(exp, scope);
    if bound > MAX_VISITED_PATHWAYS {
        return Err(ModelError::TooLarge {
            what: "the number of candidate pathways to enumerate".into(),
            value: bound.min(u64::MAX as f64) as u64,
            limit: MAX_VISITED_PATHWAYS as u64,
            hint: "lower the order, restrict the pulses with `drives`, merge states, or use the agnostic rejection set instead of --from-pathways".into(),
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::experiment_file::parse_experiment;
    use crate::pathways::count_pathways;

    #[test]
    fn the_bound_is_never_below_the_true_count() {
        let fields = "[[field]]\nname = \"1\"\n[[field]]\nname = \"2\"\ninteractions = 3\n[[field]]\nname = \"3\"\n[[field]]\nname = \"LO\"\nkind = \"lo\"\n[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }, { name = \"f\", manifold = 2 }]\n";
        for overlap in ["false", "true", "[\"1\", \"2\"]", "[\"2\", \"3\"]"] {
            let text = format!(
                "order = 5\noverlap = {overlap}\n[detection]\nmode = \"emission\"\n{fields}"
            );
            let e = parse_experiment(&text, "t.toml".as_ref()).unwrap();
            for scope in [Scope::Signal, Scope::Through(3), Scope::Through(5)] {
                let count = count_pathways(&e, scope).unwrap() as f64;
                assert!(pathway_bound(&e, scope) >= count, "{overlap} {scope:?}");
            }
            assert!(check_size(&e, Scope::Through(5)).is_ok());
        }
    }

    #[test]
    fn field_sequences_are_counted_exactly_per_time_block() {
        // Hand counts over three pulses once each: time-ordered, one sequence; pulses 1, 2
        // overlapping, 2!/(1!1!) = 2 orders; all three, 3! = 6. Through two interactions,
        // block ranks never going back: time-ordered C(2+3-1, 2) = 6; blocks {1,2},{3}:
        // 2^2 + 2 + 1 = 7; one block of three: 3^2 = 9.
        let fields = "[[field]]\nname = \"1\"\n[[field]]\nname = \"2\"\n[[field]]\nname = \"3\"\n[[field]]\nname = \"LO\"\nkind = \"lo\"\n[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }]\n";
        for (overlap, signal, through2) in [
            ("false", 1.0, 6.0),
            ("[\"1\", \"2\"]", 2.0, 7.0),
            ("true", 6.0, 9.0),
        ] {
            let text = format!(
                "order = 3\noverlap = {overlap}\n[detection]\nmode = \"emission\"\n{fields}"
            );
            let e = parse_experiment(&text, "t.toml".as_ref()).unwrap();
            let counts = SequenceCounts::new(&e, 2);
            assert_eq!(counts.signal, signal, "{overlap}");
            assert_eq!(counts.through[2], through2, "{overlap}");
        }
    }
}
