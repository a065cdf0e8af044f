//! Exact weights of the best noise efficiency for a feasible step set. With `A_R` a set of
//! rows spanning the row space of `A_o` (exactly independent, from [`super::decide`]) and
//! `M = [A_R; 1]` (full row rank because the all-ones row is outside that span), the
//! minimum-norm solution of `A_o v = 0`, `sum v = 1` is `v = M^H (M M^H)^(-1) e_last`: it is
//! the multiple of the projection of the all-ones vector onto the kernel, which maximises the
//! noise efficiency. Every entry lies in `Q(zeta_L)` (the field is closed under complex
//! conjugation), so the Gram matrix `M M^H` is solved by exact Gaussian elimination with
//! [`Cyclo`] arithmetic and inverses through the field norm ([`super::galois::inverse`]).

use num_bigint::BigInt;

use super::decide::Ctx;
use super::galois::inverse;
use super::BeyondError;
use crate::exact::Cyclo;

/// Exact weights `w_m = v_m exp(-2 pi i t . phi_m)` of output `o` on `subset`, using the
/// spanning rows `rows` of its difference matrix; `F(t) = sum v = 1`.
pub(crate) fn exact_weights(
    ctx: &Ctx,
    o: usize,
    subset: &[usize],
    rows: &[usize],
) -> Result<Vec<Cyclo>, BeyondError> {
    let l = ctx.l;
    let pts: Vec<Vec<u32>> = subset.iter().map(|&p| ctx.point(p)).collect();
    let n = pts.len();
    let e = ctx.exps(o, &pts);
    // Exponents of M: the chosen rows, then the all-ones row.
    let mut me: Vec<Vec<u32>> = rows
        .iter()
        .map(|&r| e[r * n..(r + 1) * n].to_vec())
        .collect();
    me.push(vec![0; n]);
    let k = me.len();
    // Gram matrix G[i][j] = sum_m zeta^(e_im - e_jm), an integer polynomial in zeta.
    let mut g: Vec<Vec<Cyclo>> = Vec::with_capacity(k);
    for i in 0..k {
        let mut row = Vec::with_capacity(k);
        for j in 0..k {
            let mut poly = vec![BigInt::from(0); l as usize];
            for m in 0..n {
                poly[((me[i][m] + l - me[j][m]) % l) as usize] += 1;
            }
            row.push(Cyclo::from_int_poly(l, poly, BigInt::from(1))?);
        }
        g.push(row);
    }
    let mut rhs = vec![Cyclo::zero(l)?; k];
    rhs[k - 1] = Cyclo::one(l)?;
    let x = solve(g, rhs)?;
    let (t, _) = &ctx.outputs[o];
    let mut w = Vec::with_capacity(n);
    for m in 0..n {
        // v_m = sum_i conj(M_im) x_i
        let mut v = Cyclo::zero(l)?;
        for i in 0..k {
            v = v.add(&x[i].mul_root_of_unity(-(me[i][m] as i64)))?;
        }
        let et = ctx.exponent(t, &pts[m]);
        w.push(v.mul_root_of_unity(-(et as i64)));
    }
    Ok(w)
}

/// Solve the square system `a x = b` exactly (Gaussian elimination, first nonzero pivot).
fn solve(mut a: Vec<Vec<Cyclo>>, mut b: Vec<Cyclo>) -> Result<Vec<Cyclo>, BeyondError> {
    let k = b.len();
    for c in 0..k {
        let p = (c..k)
            .find(|&r| !a[r][c].is_zero())
            .ok_or(BeyondError::Internal {
                what: "the Gram matrix of a feasible step set was singular",
            })?;
        a.swap(p, c);
        b.swap(p, c);
        let iv = inverse(&a[c][c])?;
        for r in c + 1..k {
            if a[r][c].is_zero() {
                continue;
            }
            let f = a[r][c].mul(&iv)?;
            let (upper, lower) = a.split_at_mut(r);
            for (x, y) in lower[0][c..].iter_mut().zip(&upper[c][c..]) {
                *x = x.sub(&f.mul(y)?)?;
            }
            let s = f.mul(&b[c])?;
            b[r] = b[r].sub(&s)?;
        }
    }
    let mut x = vec![Cyclo::zero(a[0][0].order())?; k];
    for c in (0..k).rev() {
        let mut s = b[c].clone();
        for j in c + 1..k {
            s = s.sub(&a[c][j].mul(&x[j])?)?;
        }
        x[c] = s.mul(&inverse(&a[c][c])?)?;
    }
    Ok(x)
}
