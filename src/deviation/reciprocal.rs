//! Pair sums weighted by reciprocals, Σ z_u·z_v / x(u, v), in one pass over
//! the data: 1/x written as a sum of decaying exponentials, each of which
//! factors into a weight of u times a weight of v.
//!
//! **The representation.** 1/x = ∫ exp(s − x·eˢ) ds over the real line
//! (analytic: substitute t = x·eˢ in ∫₀^∞ e^{−t} dt / x). With
//! s = σ − e^{−(σ−σ₀)}, which sends the left tail to −∞ double-exponentially,
//! and the trapezoid rule of step h = [`STEP`] in σ:
//!
//! 1/x ≈ Σ_j c_j·e^{−λ_j·x},  λ_j = e^{s_j},  c_j = h·(1 + e^{−(σ_j−σ₀)})·λ_j,
//! σ_j = σ₀ + j·h,  σ₀ = −ln X − 3,
//!
//! for 1 ≤ x ≤ X. The trapezoid rule's error on this integrand is, relative
//! to 1/x and uniformly in x, about 2·|Γ(1 − 2πi/h)| ≈ 2e-16 (the Fourier
//! transform of the integrand is x^{iω−1}·Γ(1 − iω); analytic), below the
//! rounding of one f64; the nodes dropped at either end (c_j·X < 1e-18 on
//! the left, λ_j·x > [`CUT`] on the right) weigh less than 1e-18 relative.
//! The test `represents_reciprocals` holds the sum, as evaluated in f64, to
//! 2e-15 relative (1.1e-15 measured) at every x up to 2^16 and at random x
//! up to 2^40. About four nodes per factor e of X: 43 nodes at X = 1, 88 at
//! 2^16, 117 at 10^8, of which about 45 reach across the whole range (the
//! others die out within CUT/λ_j).
//!
//! **The kernel.** e^{−λ(m − v + u)} = e^{−λ(m−v)}·e^{−λu} with both
//! factors at most 1, so a sum over pairs u ≤ f(v) is a running sum
//! P(j) = Σ_{u≤j} z_u·e^{−λu} read at the right place: O(nodes) a sample,
//! nothing stored beyond a few buffers. The powers e^{−λj} are a table of
//! e^{−λi}, i ≤ [`BLOCK`], times e^{−λ·j0} taken afresh at each block start
//! (two roundings from the exact power, not one a step).
//!
//! Rounding: the weights are good to about 1e-15 relative; the running sums
//! are plain f64 sums over up to m/2 terms, whose rounding grows about as
//! √m·ε relative to the sum of the |terms|. Against the direct sums (test
//! `one_pass_sums_equal_their_definitions`, m up to 32,770) the one pass
//! was within 1.5e-14 relative (white values and random walks; 1e-14 of the
//! scale Σz²·ln m is the bound tested); the Theo1 block form built on it is
//! tested to 1e-10 against the direct double sum, as before.

/// The step h of the trapezoid rule in σ (see the module notes): the
/// relative error of the representation is about 2·|Γ(1 − 2πi/h)|, 1.8e-16
/// at 1/4 (3e-15 at 0.27, 1e-13 at 0.3).
const STEP: f64 = 0.25;

/// A node's term c·e^{−λx} is left out where λ·x exceeds this: its share of
/// 1/x is then below h·(1 + e^{−(σ−σ₀)})·λx·e^{−λx} < 1e-20.
const CUT: f64 = 50.0;

/// σ₀ = −ln X − this: the double-exponential tail starts well to the left of
/// the smallest rate that matters (λ ≈ 1/X).
const BACK: f64 = 3.0;

/// Left-tail nodes are kept while c·X is at least this.
const FLOOR: f64 = 1e-18;

/// Nodes λ_j (ascending) and weights c_j with 1/x ≈ Σ_j c_j·e^{−λ_j·x} for
/// 1 ≤ x ≤ top (see the module notes).
pub(crate) struct Reciprocals {
    pub(crate) rate: Vec<f64>,
    pub(crate) weight: Vec<f64>,
}

impl Reciprocals {
    /// The nodes for 1 ≤ x ≤ top (top ≥ 1).
    pub(crate) fn new(top: f64) -> Self {
        let top = top.max(1.0);
        let s0 = -top.ln() - BACK;
        let mut j = ((CUT.ln() - s0) / STEP).ceil() as i64;
        let (mut rate, mut weight) = (Vec::new(), Vec::new());
        // At most a few hundred nodes: the left tail falls double-
        // exponentially once σ < σ₀.
        for _ in 0..1000 {
            let sigma = s0 + j as f64 * STEP;
            let g = (-(sigma - s0)).exp();
            let lambda = (sigma - g).exp();
            let c = STEP * (1.0 + g) * lambda;
            if sigma < s0 && (c * top < FLOOR || !c.is_finite()) {
                break;
            }
            rate.push(lambda);
            weight.push(c);
            j -= 1;
        }
        rate.reverse();
        weight.reverse();
        Self { rate, weight }
    }

    /// Σ_j c_j·e^{−λ_j·x} (the tests' handle on the representation).
    #[cfg(test)]
    fn at(&self, x: f64) -> f64 {
        self.rate
            .iter()
            .zip(&self.weight)
            .filter(|(l, _)| *l * x <= CUT)
            .map(|(l, c)| c * (-l * x).exp())
            .sum()
    }
}

/// Samples a block of the kernel covers: the tables e^{±λi} run to this.
const BLOCK: usize = 256;

/// Nodes taken together (one group of lanes the compiler can keep in
/// registers and vectorise).
const LANES: usize = 4;
type V = [f64; LANES];

/// The two reciprocal-weighted sums of the Theo1 block that need the pairs
/// of a head (z, m samples, m even) rather than whole-record lags, for two
/// sequences z1 and z2 added:
///
/// - the triangle sum T(z) = Σ_{k=1}^{m/2} (1/k)·Σ_{j<k} z_j·z_{j+m−2k},
///   i.e. Σ 2/(m − v + u)·z_u·z_v over u ≤ v, v − u even, u + v < m;
/// - the far-lag sum F(z) = Σ_{ℓ=m/2}^{m−1} hd(ℓ)/(m − ℓ), hd(ℓ) =
///   Σ_{t<m−ℓ} z_t·z_{t+ℓ}, i.e. Σ z_u·z_v/(m − v + u) over v − u ≥ m/2.
///
/// Returns (T(z1) + T(z2), F(z1) + F(z2)). Both weights are 1/x with
/// x = m − v + u ∈ [1, m] (times 2 for T), so one pass over j < m/2 serves
/// both, with P_π(j) = Σ_{u≤j, u≡π} z_u·e^{−λu} for each node λ:
///
/// - T, v = j (v < m/2, u ≤ v, u ≡ v): z_j·e^{−λ(m−j)}·P_{j mod 2}(j);
/// - T, v = m−1−j (v ≥ m/2, u ≤ m−1−v = j, u ≡ v ≡ j+1): z_{m−1−j}·
///   e^{−λ(j+1)}·P_{(j+1) mod 2}(j);
/// - F, v = j + m/2 (u ≤ v − m/2 = j): z_{j+m/2}·e^{−λ(m/2−j)}·(P_0 + P_1)(j).
///
/// A group of nodes whose slowest rate λ has λ·m/4 > [`CUT`] (a "short"
/// group) only weighs the pairs with small x: its running sums settle
/// within CUT/λ < m/4 samples, T's first half and F's early terms vanish,
/// and F needs only the last CUT/λ values of j; such groups run over those
/// samples alone.
pub(crate) fn triangles_and_far_lags<Z1, Z2>(z1: &Z1, z2: &Z2, m: usize) -> (f64, f64)
where
    Z1: Fn(usize) -> f64 + Sync,
    Z2: Fn(usize) -> f64 + Sync,
{
    if m < 2 {
        return (0.0, 0.0);
    }
    if m < DIRECT_BELOW {
        let (t1, f1) = direct_sums(&(0..m).map(z1).collect::<Vec<_>>());
        let (t2, f2) = direct_sums(&(0..m).map(z2).collect::<Vec<_>>());
        return (t1 + t2, f1 + f2);
    }
    one_pass(z1, z2, m)
}

/// [`triangles_and_far_lags`] by the one pass over the nodes (m ≥ 2).
fn one_pass<Z1, Z2>(z1: &Z1, z2: &Z2, m: usize) -> (f64, f64)
where
    Z1: Fn(usize) -> f64 + Sync,
    Z2: Fn(usize) -> f64 + Sync,
{
    let kernel = Kernel::at(m);
    let k = &*kernel;
    let cut = k.full.len() / 2;
    let first = || full_groups(z1, z2, m, &k.full[..cut]);
    let rest = || {
        let mut v = full_groups(z1, z2, m, &k.full[cut..]);
        for (g, table, reach) in &k.short {
            v.push(short_group(z1, z2, m, g, table, *reach));
        }
        v
    };
    // From SPLIT_FROM on the two halves of the groups run on two plain
    // threads (not rayon tasks: the caller may hold a share of the block
    // memory that a waiting rayon worker could need). Each group's sums
    // are the same either way, and they are added in the groups' order.
    let (a, b) = if m >= SPLIT_FROM && rayon::current_num_threads() >= 2 {
        std::thread::scope(|scope| {
            let helper = scope.spawn(rest);
            let a = first();
            match helper.join() {
                Ok(b) => (a, b),
                Err(e) => std::panic::resume_unwind(e),
            }
        })
    } else {
        (first(), rest())
    };
    let (mut tri, mut far) = (0.0, 0.0);
    for (t, f) in a.into_iter().chain(b) {
        tri += t;
        far += f;
    }
    (tri, far)
}

/// From this m on [`one_pass`] runs its groups on two threads: the largest
/// factors are one block of the record, alone on their thread. Measured
/// at 10^8 points: the pass at m = 89.5 M took 8.6 s on one thread. The
/// unit tests lower it to 2^12, so that the tests against the direct sums
/// go through both threads.
const SPLIT_FROM: usize = if cfg!(test) { 1 << 12 } else { 1 << 20 };

/// Below this m, [`triangles_and_far_lags`] sums the definitions directly
/// (O(m²/4) in contiguous dot products, cheaper than the pass's nodes and
/// tables there). Measured at 10^7 points (Theo1 per τ,
/// `TAUWISE_BENCH_PER_TAU=1`): at m = 1,366 the two took 0.20–0.28 s and
/// 0.25 s, at m = 2,730 0.30–0.35 s against 0.19–0.22 s.
const DIRECT_BELOW: usize = 2048;

/// A group that reaches across the pass, with e^{−λi} and e^{+λi} for
/// i ≤ min([`BLOCK`], m/2) and e^{−λ(m − m/2)}.
type FullGroup = (Group, Vec<V>, Vec<V>, V);

/// The nodes of [`triangles_and_far_lags`] at one m, in groups, with their
/// tables: built once per m and thread (the blocks of one τ share them).
struct Kernel {
    m: usize,
    /// Groups whose slowest node reaches across the pass; e^{−λi} and
    /// e^{+λi} for i ≤ min([`BLOCK`], m/2); e^{−λ(m − m/2)}.
    full: Vec<FullGroup>,
    /// The other groups, with e^{−λi}, i ≤ [`BLOCK`], and their reach.
    short: Vec<(Group, Vec<V>, usize)>,
}

thread_local! {
    /// The last [`Kernel`] built on this thread.
    static KERNEL: std::cell::RefCell<Option<std::sync::Arc<Kernel>>> =
        const { std::cell::RefCell::new(None) };
}

impl Kernel {
    /// The kernel at m: this thread's last one when it was built for m.
    fn at(m: usize) -> std::sync::Arc<Kernel> {
        KERNEL.with(|cell| {
            let mut cell = cell.borrow_mut();
            match cell.as_ref() {
                Some(k) if k.m == m => k.clone(),
                _ => {
                    let k = std::sync::Arc::new(Kernel::new(m));
                    *cell = Some(k.clone());
                    k
                }
            }
        })
    }

    fn new(m: usize) -> Self {
        let half = m / 2;
        let nodes = Reciprocals::new(m as f64);
        let (mut full, mut short) = (Vec::new(), Vec::new());
        for g in lane_groups(&nodes) {
            // A group's slowest node settles within `reach` samples
            // (λ·reach ≥ CUT); the group reaches across the pass when that
            // is at least a quarter of m.
            let slowest = g.rate.iter().cloned().fold(f64::INFINITY, f64::min);
            let reach = (CUT / slowest).ceil();
            if 2.0 * reach >= half as f64 {
                // Never past m/2: e^{+λi} stays below e^{λ·m/2} ≤ e^{4.3·CUT}.
                let top = BLOCK.min(half);
                let down = power_table(&g.rate, -1.0, top);
                let up = power_table(&g.rate, 1.0, top);
                let lift = decay(&g.rate, (m - half) as f64);
                full.push((g, down, up, lift));
            } else {
                let down = power_table(&g.rate, -1.0, BLOCK);
                short.push((g, down, reach as usize));
            }
        }
        Self { m, full, short }
    }
}

/// The two sums of [`triangles_and_far_lags`] for one sequence by their
/// definitions, each inner sum a contiguous dot product: O(m²/4).
fn direct_sums(z: &[f64]) -> (f64, f64) {
    let m = z.len();
    let half = m / 2;
    let mut tri = 0.0;
    for k in 1..=half {
        tri += dot(&z[..k], &z[m - 2 * k..m - k]) / k as f64;
    }
    let mut far = 0.0;
    for l in half..m {
        far += dot(&z[..m - l], &z[l..]) / (m - l) as f64;
    }
    (tri, far)
}

/// Σ_i x_i·y_i over the shorter of the two, in four running sums (so that
/// the loop vectorises; the order of the additions is fixed by the lengths
/// alone).
#[inline]
fn dot(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len().min(y.len());
    let (x, y) = (&x[..n], &y[..n]);
    let mut acc = [0.0f64; 4];
    let (xc, yc) = (x.chunks_exact(4), y.chunks_exact(4));
    let (xr, yr) = (xc.remainder(), yc.remainder());
    for (p, q) in xc.zip(yc) {
        for l in 0..4 {
            acc[l] += p[l] * q[l];
        }
    }
    let mut s = (acc[0] + acc[2]) + (acc[1] + acc[3]);
    for (p, q) in xr.iter().zip(yr) {
        s += p * q;
    }
    s
}

/// Up to [`LANES`] nodes: their rates and weights (unused lanes weigh 0).
struct Group {
    rate: V,
    weight: V,
}

/// The nodes in groups of [`LANES`], slowest first; the last group padded
/// with lanes of weight 0 at the last rate.
fn lane_groups(nodes: &Reciprocals) -> Vec<Group> {
    nodes
        .rate
        .chunks(LANES)
        .zip(nodes.weight.chunks(LANES))
        .map(|(r, c)| {
            let last = r[r.len() - 1];
            let mut g = Group {
                rate: [last; LANES],
                weight: [0.0; LANES],
            };
            g.rate[..r.len()].copy_from_slice(r);
            g.weight[..c.len()].copy_from_slice(c);
            g
        })
        .collect()
}

/// e^{−λ·i} (sign −1) or e^{+λ·i} (sign +1) for i = 0 … top (at most
/// [`BLOCK`]), each lane from `exp` directly.
fn power_table(rate: &V, sign: f64, top: usize) -> Vec<V> {
    (0..=top)
        .map(|i| {
            let mut v = [0.0; LANES];
            for l in 0..LANES {
                v[l] = (sign * rate[l] * i as f64).exp();
            }
            v
        })
        .collect()
}

/// e^{−λ·t} for each lane.
#[inline]
fn decay(rate: &V, t: f64) -> V {
    let mut v = [0.0; LANES];
    for l in 0..LANES {
        v[l] = (-rate[l] * t).exp();
    }
    v
}

/// The state of one group over the pass, for each of the two sequences:
/// the running sums by parity of u and the two sums.
#[derive(Clone, Copy, Default)]
struct Running {
    p: [V; 2],
    tri: V,
    far: V,
}

/// [`triangles_and_far_lags`] over the groups that reach across the whole
/// pass: blocks of [`BLOCK`] samples, the block's samples read once into
/// buffers, then each group runs over the block.
fn full_groups<Z1, Z2>(z1: &Z1, z2: &Z2, m: usize, groups: &[FullGroup]) -> Vec<(f64, f64)>
where
    Z1: Fn(usize) -> f64,
    Z2: Fn(usize) -> f64,
{
    let half = m / 2;
    let mut state = vec![[Running::default(); 2]; groups.len()];
    let mut buf = [[0.0f64; BLOCK]; 6];
    let mut j0 = 0;
    while j0 < half {
        let len = BLOCK.min(half - j0);
        for (i, j) in (j0..j0 + len).enumerate() {
            buf[0][i] = z1(j);
            buf[1][i] = z1(m - 1 - j);
            buf[2][i] = z1(j + half);
            buf[3][i] = z2(j);
            buf[4][i] = z2(m - 1 - j);
            buf[5][i] = z2(j + half);
        }
        for ((g, down, up, lift), st) in groups.iter().zip(state.iter_mut()) {
            let be = decay(&g.rate, j0 as f64);
            let bh = decay(&g.rate, (half - j0) as f64);
            for (s, run) in st.iter_mut().enumerate() {
                let [a, b, c] = [&buf[3 * s], &buf[3 * s + 1], &buf[3 * s + 2]];
                let seq = (&a[..len], &b[..len], &c[..len]);
                block_pass(run, seq, (down, up), &be, &bh, lift);
            }
        }
        j0 += len;
    }
    groups
        .iter()
        .zip(&state)
        .map(|((g, ..), st)| {
            let (mut tri, mut far) = (0.0, 0.0);
            for l in 0..LANES {
                let c = g.weight[l];
                tri += 2.0 * c * (st[0].tri[l] + st[1].tri[l]);
                far += c * (st[0].far[l] + st[1].far[l]);
            }
            (tri, far)
        })
        .collect()
}

/// One group of full nodes over one block (starting at an even j0) for one
/// sequence: a = z_j, b = z_{m−1−j}, c = z_{j+m/2}; `be` = e^{−λ·j0},
/// `bh` = e^{−λ(m/2 − j0)}, `lift` = e^{−λ(m − m/2)}.
#[inline]
fn block_pass(
    run: &mut Running,
    (a, b, c): (&[f64], &[f64], &[f64]),
    (t, u): (&[V], &[V]),
    be: &V,
    bh: &V,
    lift: &V,
) {
    let len = a.len();
    let mut pc = run.p[0];
    let mut po = run.p[1];
    let mut tri = [0.0; LANES];
    let mut far = [0.0; LANES];
    for i in 0..len {
        let (ai, bi, ci) = (a[i], b[i], c[i]);
        for l in 0..LANES {
            let e = be[l] * t[i][l];
            let e1 = be[l] * t[i + 1][l];
            let h = bh[l] * u[i][l];
            let g = h * lift[l];
            pc[l] += ai * e;
            tri[l] += ai * g * pc[l] + bi * e1 * po[l];
            far[l] += ci * h * (pc[l] + po[l]);
        }
        std::mem::swap(&mut pc, &mut po);
    }
    // After an odd block pc holds the odd sums: put them back by parity.
    if len % 2 == 1 {
        std::mem::swap(&mut pc, &mut po);
    }
    run.p = [pc, po];
    for l in 0..LANES {
        run.tri[l] += tri[l];
        run.far[l] += far[l];
    }
}

/// [`triangles_and_far_lags`] for one group of short nodes (reach r < m/4
/// samples): the running sums and T's second half over j < r, then F over
/// the last r values of j with the settled sums.
fn short_group<Z1, Z2>(z1: &Z1, z2: &Z2, m: usize, g: &Group, t: &[V], r: usize) -> (f64, f64)
where
    Z1: Fn(usize) -> f64,
    Z2: Fn(usize) -> f64,
{
    let seqs: [&dyn Fn(usize) -> f64; 2] = [z1, z2];
    let (mut tri, mut far) = (0.0, 0.0);
    for z in seqs {
        let mut p = [[0.0f64; LANES]; 2];
        let mut tr = [0.0f64; LANES];
        powers(g, t, r, |j, e, e1| {
            let (aj, bj) = (z(j), z(m - 1 - j));
            let (pc, po) = (j % 2, 1 - j % 2);
            for l in 0..LANES {
                p[pc][l] += aj * e[l];
                tr[l] += bj * e1[l] * p[po][l];
            }
        });
        // F: v = j + m/2 with j = m/2 − 1 − i, weight e^{−λ(i+1)}.
        let mut fr = [0.0f64; LANES];
        powers(g, t, r, |i, _, e1| {
            let c = z(m - 1 - i);
            for l in 0..LANES {
                fr[l] += c * e1[l] * (p[0][l] + p[1][l]);
            }
        });
        for l in 0..LANES {
            tri += 2.0 * g.weight[l] * tr[l];
            far += g.weight[l] * fr[l];
        }
    }
    (tri, far)
}

/// f(j, e^{−λj}, e^{−λ(j+1)}) for j = 0 … r − 1 and the group's lanes:
/// the table `t` (e^{−λi}, i ≤ [`BLOCK`]) times e^{−λ·j0} taken afresh at
/// each block start j0.
#[inline]
fn powers(g: &Group, t: &[V], r: usize, mut f: impl FnMut(usize, &V, &V)) {
    let mut j0 = 0;
    while j0 < r {
        let len = BLOCK.min(r - j0);
        let be = decay(&g.rate, j0 as f64);
        for i in 0..len {
            let (mut e, mut e1) = ([0.0; LANES], [0.0; LANES]);
            for l in 0..LANES {
                e[l] = be[l] * t[i][l];
                e1[l] = be[l] * t[i + 1][l];
            }
            f(j0 + i, &e, &e1);
        }
        j0 += len;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// Σ c_j·e^{−λ_j·x} = 1/x to 1e-15 relative at every integer x up to
    /// 2^16 and at random x up to 2^40 (analytic: the trapezoid rule's
    /// error on exp(s − x·eˢ), see the module notes).
    #[test]
    fn represents_reciprocals() {
        let mut rng = ChaCha8Rng::seed_from_u64(21);
        let mut worst = 0.0f64;
        for top in [1.0f64, 2.0, 64.0, 65536.0, 1e8, 2f64.powi(40)] {
            let r = Reciprocals::new(top);
            eprintln!("top={top}: {} nodes", r.rate.len());
            let mut xs: Vec<f64> = (1..=(top.min(65536.0) as usize))
                .map(|x| x as f64)
                .collect();
            if top > 1.0 {
                xs.extend((0..2000).map(|_| rng.gen_range(0.0..top.ln()).exp()));
            }
            xs.push(top);
            for x in xs {
                let rel = (r.at(x) * x - 1.0).abs();
                worst = worst.max(rel);
                assert!(rel <= 2e-15, "top={top} x={x}: relative error {rel:e}");
            }
        }
        eprintln!("worst relative error {worst:e}");
    }

    /// The two sums by their definitions, summed directly.
    fn direct(z: &[f64]) -> (f64, f64) {
        let m = z.len();
        let mut tri = 0.0;
        for k in 1..=m / 2 {
            let s: f64 = (0..k).map(|j| z[j] * z[j + m - 2 * k]).sum();
            tri += s / k as f64;
        }
        let mut far = 0.0;
        for l in m / 2..m {
            let s: f64 = (0..m - l).map(|t| z[t] * z[t + l]).sum();
            far += s / (m - l) as f64;
        }
        (tri, far)
    }

    /// The one-pass sums equal their definitions summed directly (analytic
    /// identity, up to the representation's 1e-15 and rounding), on white
    /// values and on a random walk, at lengths across the block size and
    /// the split between full and short nodes.
    #[test]
    fn one_pass_sums_equal_their_definitions() {
        let mut rng = ChaCha8Rng::seed_from_u64(22);
        for m in [2usize, 4, 10, 64, 130, 512, 514, 1000, 4098, 12_000, 32_770] {
            for walk in [false, true] {
                let mut w = 0.0;
                let mut draw = || {
                    let v: f64 = rng.gen_range(-1.0..1.0);
                    if walk {
                        w += v;
                        w
                    } else {
                        v
                    }
                };
                let z1: Vec<f64> = (0..m).map(|_| draw()).collect();
                let z2: Vec<f64> = (0..m).map(|_| draw()).collect();
                let (t1, f1) = direct(&z1);
                let (t2, f2) = direct(&z2);
                let scale: f64 =
                    z1.iter().chain(&z2).map(|v| v * v).sum::<f64>() * (m as f64).ln().max(1.0);
                let (a, b) = (|t: usize| z1[t], |t: usize| z2[t]);
                let ways = [
                    ("one pass", one_pass(&a, &b, m)),
                    ("either", triangles_and_far_lags(&a, &b, m)),
                ];
                for (way, (tri, far)) in ways {
                    for (got, want, what) in
                        [(tri, t1 + t2, "triangles"), (far, f1 + f2, "far lags")]
                    {
                        assert!(
                            (got - want).abs() <= 1e-14 * scale,
                            "m={m} walk={walk} {way} {what}: {got} vs {want} (scale {scale:e})"
                        );
                    }
                }
            }
        }
    }
}
