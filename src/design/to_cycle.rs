//! Stage: the cycle table of a design: phases on every experiment field (fixed ones at 0),
//! exact weights per output, `exp(-2 pi i t.phi_m) / N` for one kept class or the sum over the
//! kept signatures for separate classes, and metadata.

use crate::cycle::{Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource};
use crate::exact::{Cyclo, ExactError, Q};
use crate::model::Experiment;
use crate::signature::Signature;
use num_bigint::BigInt;
use num_rational::Ratio;

/// Assemble a lattice-design cycle. `phases` are over the cycled fields, `order` the step
/// order to use, `outputs` the signatures (over all fields) whose characters each output's
/// weights sum: its reference alone (one class) or every kept signature (separate classes).
pub fn lattice_cycle(
    exp: &Experiment,
    cycled: &[usize],
    phases: &[Vec<Ratio<i64>>],
    order: &[usize],
    outputs: &[(String, Vec<Signature>)],
    meta: CycleMeta,
) -> Result<Cycle, ExactError> {
    let n = phases.len() as i64;
    let steps: Vec<Vec<Phase>> = order
        .iter()
        .map(|&m| {
            let mut row = vec![Phase::Exact(Ratio::from_integer(0)); exp.fields.len()];
            for (k, &j) in cycled.iter().enumerate() {
                row[j] = Phase::Exact(phases[m][k]);
            }
            row
        })
        .collect();
    let inv_n = Q::new(BigInt::from(1), BigInt::from(n));
    let mut outs = Vec::new();
    for (name, ts) in outputs {
        let mut weights = Vec::new();
        for &m in order {
            let mut w = Cyclo::zero(1)?;
            for t in ts {
                let r: Ratio<i64> = cycled
                    .iter()
                    .enumerate()
                    .map(|(k, &j)| phases[m][k] * t.0[j])
                    .sum();
                w = w.add(&Cyclo::root_of_unity(*r.denom() as u32, -*r.numer())?)?;
            }
            weights.push(Weight::Exact(w.scale(&inv_n)));
        }
        outs.push(CycleOutput {
            name: name.clone(),
            weights,
            source: match ts.as_slice() {
                [t] => WeightSource::FromSignature(t.clone()),
                _ => WeightSource::Explicit,
            },
        });
    }
    Ok(Cycle {
        fields: exp.field_names(),
        steps,
        outputs: outs,
        meta,
    })
}
