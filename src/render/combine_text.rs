//! Sentences about a combine run ([`crate::combine::Combined`]): how each output was scaled
//! and which outputs of real data are complex and why. Used by the CLI and the metadata.

use crate::combine::{Combined, Normalise};

/// `(a,b,c)` for a signature.
fn sig(b: &[i64]) -> String {
    let parts: Vec<String> = b.iter().map(i64::to_string).collect();
    format!("({})", parts.join(","))
}

/// One sentence per noteworthy fact, in output order.
pub fn combine_notes(c: &Combined, fields: &[String]) -> Vec<String> {
    let mut notes = vec![format!(
        "signatures are over the fields ({}); C = s * sum_m w_m S_m with F(b) = sum_m w_m exp(+i 2 pi b.phi_m)",
        fields.join(",")
    )];
    for o in &c.outputs {
        let g = o.gain.first().copied().unwrap_or([1.0, 0.0]);
        match c.normalise {
            Normalise::KeptAmplitude if o.scale != [1.0, 0.0] => notes.push(format!(
                "output `{}`: the weights give F(t) = {} for its kept terms, so it was multiplied by 1/F(t) and holds the kept amplitude (--as-written keeps the weights' scale)",
                o.name,
                complex_text(g)
            )),
            Normalise::KeptAmplitude if o.gain.len() > 1 && o.gain.iter().any(|x| *x != g) => notes.push(format!(
                "output `{}`: its kept terms have different F(t) ({}); the weights are applied as written",
                o.name,
                o.gain.iter().map(|x| complex_text(*x)).collect::<Vec<_>>().join(", ")
            )),
            _ => {}
        }
        if c.real_data && !o.real {
            let why = if o.unpaired.is_empty() {
                "its weights are complex".to_string()
            } else {
                format!(
                    "it keeps {} without the conjugate",
                    o.unpaired
                        .iter()
                        .map(|t| sig(&t.0))
                        .collect::<Vec<_>>()
                        .join(", ")
                )
            };
            notes.push(format!(
                "output `{}` is complex although the data are real: {why}; its real and imaginary parts are the two quadratures of the kept term",
                o.name
            ));
        }
    }
    notes
}

/// `a` or `a+bi` with up to 6 significant digits.
fn complex_text(z: [f64; 2]) -> String {
    if z[1].abs() <= 1e-12 * z[0].abs().max(1.0) {
        format!("{:.6}", z[0])
            .trim_end_matches('0')
            .trim_end_matches('.')
            .to_string()
    } else {
        format!("{:.6}{:+.6}i", z[0], z[1])
    }
}
