//! Identities of the modal decompositions and selections, checked in Rust on constructed
//! series (numpy references are in tests/python/test_modes_*.py).

use sillage::field::{Series, SeriesParts};
use sillage::modes::{
    default_block, dmd, pod, spod, DmdOptions, ModesError, PodOptions, PodSolver, RankRule,
    SelectOptions, Selection, SpodOptions, SvdRoute, Term,
};

/// Travelling waves of two frequencies plus a mean, on a grid with a masked block.
fn waves(nx: usize, ny: usize, nt: usize, dt: f64) -> Series {
    let x: Vec<f64> = (0..nx).map(|i| i as f64 * 0.1).collect();
    let y: Vec<f64> = (0..ny).map(|j| j as f64 * 0.1).collect();
    let t: Vec<f64> = (0..nt).map(|k| k as f64 * dt).collect();
    let plane = nx * ny;
    let mut mask = vec![false; plane];
    mask[ny / 2 * nx + nx / 3] = true;
    mask[ny / 2 * nx + nx / 3 + 1] = true;
    let (mut u, mut v) = (vec![0.0f32; nt * plane], vec![0.0f32; nt * plane]);
    for k in 0..nt {
        for (j, &yy) in y.iter().enumerate() {
            for (i, &xx) in x.iter().enumerate() {
                let c = j * nx + i;
                if mask[c] {
                    continue;
                }
                let tt = t[k];
                let a = 2.0 * std::f64::consts::PI * (1.5 * tt - xx);
                let b = 2.0 * std::f64::consts::PI * (4.0 * tt - 2.0 * xx);
                u[k * plane + c] = (1.0 + a.cos() * yy.sin() + 0.3 * b.sin()) as f32;
                v[k * plane + c] = (0.5 * a.sin() + 0.3 * (b + yy).cos()) as f32;
            }
        }
    }
    Series::from_parts(SeriesParts { x, y, t, u, v, mask: Some(mask), ..Default::default() })
        .unwrap()
}

/// Largest |a − b| over two series' u and v.
fn max_diff(a: &Series, b: &Series) -> f64 {
    a.u()
        .iter()
        .zip(b.u())
        .chain(a.v().iter().zip(b.v()))
        .map(|(p, q)| (*p as f64 - *q as f64).abs())
        .fold(0.0, f64::max)
}

#[test]
fn pod_routes_agree_and_modes_are_orthonormal() {
    let s = waves(16, 10, 60, 0.05);
    let a = pod(&s, &PodOptions::default()).unwrap();
    let b =
        pod(&s, &PodOptions { solver: PodSolver::Exact(SvdRoute::Direct), ..Default::default() })
            .unwrap();
    assert_eq!(a.solver, PodSolver::Exact(SvdRoute::Snapshot));
    // Four travelling-wave modes carry the signal [D]: both routes see the same four.
    for j in 0..4 {
        let rel = (a.singular_values[j] - b.singular_values[j]).abs() / b.singular_values[j];
        assert!(rel < 1e-10, "mode {j}: {rel}");
    }
    // Weighted orthonormality [D], tolerance 1e-10 (f64 round-off on n ~ 300).
    for i in 0..4 {
        for j in 0..4 {
            let g = a.layout.inner(a.modes.col_as_slice(i), a.modes.col_as_slice(j));
            let e = if i == j { 1.0 } else { 0.0 };
            assert!((g - e).abs() < 1e-10, "<phi_{i}, phi_{j}> = {g}");
        }
    }
    // Energy bookkeeping [D].
    let sum: f64 = b.energies().iter().sum();
    assert!((sum - b.total_energy).abs() < 1e-10 * b.total_energy);
    assert!((b.cumulative_energy().last().unwrap() - 1.0).abs() < 1e-10);
}

#[test]
fn pod_refuses_bad_input() {
    let s = waves(6, 5, 1, 0.1);
    assert!(matches!(pod(&s, &PodOptions::default()), Err(ModesError::TooFewSnapshots { .. })));
    let s = waves(6, 5, 8, 0.1);
    let constant = s.with_velocity(vec![1.0; s.u().len()], vec![0.0; s.v().len()], None);
    assert_eq!(pod(&constant, &PodOptions::default()).unwrap_err(), ModesError::NoEnergy);
    // Randomized without a rank.
    let e = pod(
        &s,
        &PodOptions { solver: PodSolver::Randomized(Default::default()), ..Default::default() },
    )
    .unwrap_err();
    assert!(e.to_string().contains("rank"), "{e}");
    // More modes than snapshots: capped at the numerical rank (≤ m − 1) [D].
    let p = pod(&s, &PodOptions { rank: Some(50), ..Default::default() }).unwrap();
    assert!(p.rank() <= 7, "{}", p.rank());
    // A gap makes the series unusable until cleaned.
    let mut gaps = vec![false; s.u().len()];
    gaps[3] = true;
    let gappy = s.with_velocity(s.u().to_vec(), s.v().to_vec(), Some(gaps));
    assert!(matches!(
        pod(&gappy, &PodOptions::default()),
        Err(ModesError::MissingVectors { count: 1 })
    ));
}

#[test]
fn selection_parses_and_reports_errors_by_position() {
    let s = Selection::parse("mean + pod(1-2) - 0.5*noise(rms=0.1, seed=3)").unwrap();
    assert_eq!(s.terms.len(), 3);
    assert_eq!(s.terms[1], (1.0, Term::Pod { first: 0, last: 1 }));
    assert_eq!(s.terms[2], (-0.5, Term::Noise { rms: 0.1, seed: 3 }));
    let s = Selection::parse("spod(f=0.5..1.5, modes=1-2) + dmd(f=1e-1..2)").unwrap();
    assert_eq!(s.terms[0].1, Term::Spod { fmin: 0.5, fmax: 1.5, first: 0, last: 1 });
    assert_eq!(s.terms[1].1, Term::DmdBand { fmin: 0.1, fmax: 2.0 });
    for (bad, needle, at) in [
        ("mean + pdo(1)", "unknown term 'pdo'", 8),
        ("pod(0)", "mode number", 5),
        ("pod(2-1)", "backwards", 8),
        ("noise(seed=2)", "needs rms", 14),
        ("mean +", "expected a term", 7),
        ("mean pod(1)", "unexpected text", 6),
        ("spod(f=2..1)", "LOW ≤ HIGH", 12),
    ] {
        match Selection::parse(bad) {
            Err(ModesError::Syntax { at: a, reason, .. }) => {
                assert!(reason.contains(needle), "{bad}: {reason}");
                assert_eq!(a, at, "{bad}: {reason}");
            }
            other => panic!("{bad}: {other:?}"),
        }
    }
}

#[test]
fn selections_add_up_to_the_data() {
    let s = waves(12, 8, 40, 0.05);
    let o = SelectOptions::default();
    let data = Selection::parse("data").unwrap().materialize(&s, &o).unwrap();
    assert_eq!(max_diff(&data, &s), 0.0);
    // f + residual(f) = data, for POD, DMD and SPOD models [D]; f32 output rounding.
    for f in ["mean + pod(1-2)", "dmd(1-3)", "mean + spod(f=2..3)"] {
        let a = Selection::parse(f).unwrap().materialize(&s, &o).unwrap();
        let g = Selection::parse(&format!("residual({f})")).unwrap().materialize(&s, &o).unwrap();
        let sum = Selection::parse(&format!("({f}) + residual({f})"))
            .unwrap()
            .materialize(&s, &o)
            .unwrap();
        assert!(max_diff(&sum, &s) < 1e-5, "{f}");
        assert!(max_diff(&a, &s) > 1e-3, "{f} should not be the whole data");
        assert!(g.u().iter().any(|x| x.abs() > 1e-4));
        // Masked cells stay 0.
        for (c, &m) in s.mask().iter().enumerate() {
            if m {
                assert_eq!(a.u_at(3)[c], 0.0);
            }
        }
    }
    // All POD modes rebuild the data [D].
    let all = pod(&s, &PodOptions::default()).unwrap().rank();
    let full =
        Selection::parse(&format!("mean + pod(1-{all})")).unwrap().materialize(&s, &o).unwrap();
    assert!(max_diff(&full, &s) < 1e-5);
    let e = Selection::parse("pod(500)").unwrap().materialize(&s, &o).unwrap_err();
    assert!(e.to_string().contains("POD modes"), "{e}");
}

#[test]
fn dmd_of_noise_free_waves_finds_their_frequencies_and_forecasts() {
    let dt = 0.05;
    let s = waves(12, 8, 80, dt);
    let d =
        dmd(&s, &DmdOptions { rank: RankRule::Energy(1.0 - 1e-10), ..Default::default() }).unwrap();
    // The data are a mean and two travelling waves: frequencies 0, ±1.5, ±4 [D].
    let f = d.frequencies();
    for target in [0.0, 1.5, -1.5, 4.0, -4.0] {
        let best = f.iter().map(|x| (x - target).abs()).fold(f64::MAX, f64::min);
        assert!(best < 1e-4, "{target}: {f:?}");
    }
    // Pairs adjacent, positive frequency first; partners found.
    for j in 0..d.rank() {
        if let Some(p) = d.partner(j) {
            assert_eq!(d.partner(p), Some(j));
            assert!((f[j] + f[p]).abs() < 1e-8);
        }
    }
    // Forecast one step past the record from the data of a longer run [D]: exact waves.
    let longer = waves(12, 8, 81, dt);
    let all: Vec<usize> = (0..d.rank()).collect();
    let q = d.reconstruct(80, &all);
    let truth = d.layout.snapshot(&longer, 80);
    let err = q.iter().zip(&truth).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
    assert!(err < 1e-4, "forecast error {err}");
    // Uneven times are refused.
    let mut p = SeriesParts {
        x: vec![0.0, 1.0],
        y: vec![0.0, 1.0],
        t: vec![0.0, 1.0, 3.0],
        u: (0..12).map(|i| i as f32).collect(),
        v: vec![0.0; 12],
        ..Default::default()
    };
    let e = dmd(&Series::from_parts(p.clone()).unwrap(), &DmdOptions::default()).unwrap_err();
    assert!(matches!(e, ModesError::UnevenTimes { .. }), "{e}");
    p.t = vec![0.0, 1.0, 2.0];
    assert!(dmd(&Series::from_parts(p).unwrap(), &DmdOptions::default()).is_ok());
}

#[test]
fn spod_defaults_and_checks() {
    // Default block: largest power of two ≤ 512 with ≥ 8 blocks at 50 % overlap.
    assert_eq!(default_block(240), 32);
    assert_eq!(default_block(1000), 128);
    assert_eq!(default_block(10_000), 512);
    assert_eq!(default_block(20), 4);
    let s = waves(8, 6, 64, 0.05);
    let sp = spod(&s, &SpodOptions::default()).unwrap();
    assert_eq!((sp.block, sp.overlap, sp.blocks), (8, 4, 15));
    assert_eq!(sp.frequencies.len(), 5);
    for e in &sp.energies {
        assert!(e.windows(2).all(|w| w[0] >= w[1]));
    }
    let e = spod(&s, &SpodOptions { block: Some(16), overlap: Some(16), ..Default::default() })
        .unwrap_err();
    assert!(e.to_string().contains("overlap"), "{e}");
}

/// Progress of a decomposition (the page's time-left estimate): the fractions never
/// decrease, stay in [0, 1], come in several steps, end at 1; the plan matches the work the
/// parts advance by to 5 % (so the bar neither jumps at the end nor stalls at 100 %); the
/// observer changes no number (the bytes the page receives are identical).
#[test]
fn decompositions_report_progress_and_the_same_numbers() {
    use rand::{RngExt, SeedableRng};
    use sillage::modes::overview::{decompose, decompose_with_progress, Method, ModesRequest};
    use sillage::modes::transfer::encode;
    use sillage::progress::Progress;
    // 150 snapshots: Gram panels of 32 columns (the last one partial), rows in panels. A
    // small seeded noise gives the series full numerical rank, as measured data have (the
    // plan assumes it; a lower rank makes the bar jump forward, never back).
    let clean = waves(24, 18, 150, 0.05);
    let mut rng = rand_pcg::Pcg64::seed_from_u64(7);
    let mut noisy = |f: &[f32]| -> Vec<f32> {
        f.iter().map(|&x| if x == 0.0 { x } else { x + 0.01 * rng.random::<f32>() }).collect()
    };
    let s = Series::from_parts(SeriesParts {
        x: clean.grid().x.coords(),
        y: clean.grid().y.coords(),
        t: clean.times().to_vec(),
        u: noisy(clean.u()),
        v: noisy(clean.v()),
        mask: Some(clean.mask().to_vec()),
        ..Default::default()
    })
    .unwrap();
    for (method, rank, least) in
        [(Method::Pod, None, 8), (Method::Dmd, Some(6), 6), (Method::Spod, None, 10)]
    {
        let req = ModesRequest { method, rank };
        let mut seen = Vec::new();
        let mut record = |f: f64| seen.push(f);
        let mut progress = Progress::to(&mut record);
        let watched = decompose_with_progress(&s, &req, &mut progress).unwrap();
        let accounted = progress.accounted();
        assert!((0.95..=1.05).contains(&accounted), "{method:?}: plan off: {accounted}");
        let plain = decompose(&s, &req).unwrap();
        assert!(encode(&watched) == encode(&plain), "{method:?}: the observer changed the result");
        assert!(seen.len() >= least, "{method:?}: {} reports: {seen:?}", seen.len());
        assert!(seen.windows(2).all(|w| w[0] <= w[1]), "{method:?}: {seen:?}");
        assert!(seen.iter().all(|f| (0.0..=1.0).contains(f)), "{method:?}: {seen:?}");
        assert_eq!(seen.last(), Some(&1.0), "{method:?}");
    }
}
