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
    let pulses = exp.pulse_indices().len() as f64;
    let max_depth = match scope {
        Scope::Signal => exp.order,
        Scope::Through(k) => k,
    };
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
        let d = f64::from(depth);
        let sequences = match scope {
            Scope::Signal if depth < max_depth => continue,
            Scope::Signal if exp.overlap => multinomial(exp),
            Scope::Signal => 1.0,
            Scope::Through(_) if exp.overlap => pulses.powf(d),
            Scope::Through(_) => binomial(d + pulses - 1.0, d),
        };
        total += walks.iter().sum::<f64>() * sequences;
    }
    total
}

fn binomial(n: f64, k: f64) -> f64 {
    (0..k as u32).fold(1.0, |acc, i| {
        acc * (n - f64::from(i)) / (f64::from(i) + 1.0)
    })
}

fn multinomial(exp: &Experiment) -> f64 {
    let mut total = 0.0;
    let mut result = 1.0;
    for j in exp.pulse_indices() {
        let m = f64::from(exp.fields[j].interactions);
        total += m;
        result *= binomial(total, m);
    }
    result
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
        let text = "order = 3\n[detection]\nmode = \"emission\"\n[[field]]\nname = \"1\"\n[[field]]\nname = \"2\"\n[[field]]\nname = \"3\"\n[[field]]\nname = \"LO\"\nkind = \"lo\"\n[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }, { name = \"f\", manifold = 2 }]\n";
        let e = parse_experiment(text, "t.toml".as_ref()).unwrap();
        for scope in [Scope::Signal, Scope::Through(3), Scope::Through(5)] {
            assert!(
                pathway_bound(&e, scope) >= count_pathways(&e, scope).unwrap() as f64,
                "{scope:?}"
            );
        }
        assert!(check_size(&e, Scope::Through(5)).is_ok());
    }
}
