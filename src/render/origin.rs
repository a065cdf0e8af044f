//! Words for the origin of a rejected term (why the selection holds it), for tables.

use crate::selection::Origin;

/// A short phrase: `LO/probe alone`, `scatter pu1 onto pr`, `order 3`, `R pathway (c.c.)`.
pub fn origin_text(o: &Origin) -> String {
    match o {
        Origin::Unmodulated => "reference alone / phase-free background".into(),
        Origin::Scatter { pulse, onto } => format!("scatter {pulse} onto {onto}"),
        Origin::PulsePair { plus, minus } => format!("pair {plus}/{minus} (scatter)"),
        Origin::Agnostic { order } => format!("order {order}"),
        Origin::Pathway {
            class,
            order,
            conjugate,
        } => format!(
            "{} pathway, order {order}{}",
            class.short(),
            if *conjugate { " (c.c.)" } else { "" }
        ),
        Origin::OtherOutput { output } => format!("output {output}"),
        Origin::Conjugate => "conjugate".into(),
    }
}
