//! Building the cycle table from a design: phases on every experiment field (fixed ones at 0),
//! exact weights `exp(-2 pi i t.phi_m) / N` per output, and metadata.

use crate::cycle::{Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource};
use crate::exact::{Cyclo, ExactError, Q};
use crate::model::Experiment;
use crate::signature::Signature;
use num_bigint::BigInt;
use num_rational::Ratio;

/// Assemble a lattice-design cycle. `phases` are over the cycled fields, `order` the step
/// order to use, `refs` the reference signature (over all fields) of each output.
pub fn lattice_cycle(
    exp: &Experiment,
    cycled: &[usize],
    phases: &[Vec<Ratio<i64>>],
    order: &[usize],
    outputs: &[(String, Signature)],
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
    for (name, t) in outputs {
        let mut weights = Vec::new();
        for &m in order {
            let r: Ratio<i64> = cycled
                .iter()
                .enumerate()
                .map(|(k, &j)| phases[m][k] * t.0[j])
                .sum();
            let w = Cyclo::root_of_unity(*r.denom() as u32, -*r.numer())?.scale(&inv_n);
            weights.push(Weight::Exact(w));
        }
        outs.push(CycleOutput {
            name: name.clone(),
            weights,
            source: WeightSource::FromSignature(t.clone()),
        });
    }
    Ok(Cycle {
        fields: exp.field_names(),
        steps,
        outputs: outs,
        meta,
    })
}
