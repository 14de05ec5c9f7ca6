//! The size estimate of `antinode_solver::budget` against what a solve measures, for
//! orders 1–3 on two sizes of the empty 300 × 300 × 200 mm box.
//!
//! The estimate is meant to stay on the safe side (it decides whether a solve is
//! refused for lack of memory): factor entries c·n^{4/3} with c = `fill_constant(order)`
//! (the n^{4/3} growth of nested dissection on 3-D meshes: George 1973, Lipton–Rose–Tarjan
//! 1979, from memory) and `row_entries(order)` stored matrix entries per unknown. The test
//! prints estimate and measurement, the fitted c = factor / n^{4/3} and the growth exponent
//! between the two sizes, and fails when a measurement exceeds its estimate.

use antinode_solver::budget::{fill_constant, plan, plan_counted, row_entries, OPTIMISTIC_FILL};
use antinode_solver::{solve_modes, ModeSettings, NedelecOrder, RegionMaterial};
use antinode_tests::box_mesh;

#[test]
fn estimate_covers_measured_factor_and_matrix() {
    let size = [0.3, 0.3, 0.2];
    // Cells per 100 mm: two sizes per order, a few thousand to ~40k unknowns.
    let cases = [
        (NedelecOrder::One, [4, 6]),
        (NedelecOrder::Two, [3, 4]),
        (NedelecOrder::Three, [2, 3]),
    ];
    println!("order  cells      n   nnz/n (est)   factor/n (est)    c = factor/n^(4/3)   time");
    for (order, pers) in cases {
        let mut fits = Vec::new();
        for per in pers {
            let mesh = box_mesh(size, [3 * per, 3 * per, 2 * per]);
            let mut s = ModeSettings::new(2.45e9);
            s.order = order;
            s.count = 1;
            let est = plan(&mesh, &[RegionMaterial::VACUUM], &s);
            let t = std::time::Instant::now();
            let set = solve_modes(&mesh, &[RegionMaterial::VACUUM], &s, &mut |_| {})
                .expect("solve_modes");
            let st = &set.stats;
            let n = st.n_dofs as f64;
            let nnz = st.matrix_nnz as f64 / n;
            let fac = st.factor_nnz as f64;
            let c = fac / n.powf(4.0 / 3.0);
            println!(
                "  {}    {:>2}×{:>2}×{:>2} {:>7} {:>6.1} ({:>5.1}) {:>8.1} ({:>7.1}) {:>10.2} (est {}) {:>6.1} s",
                order.as_int(),
                3 * per,
                3 * per,
                2 * per,
                st.n_dofs,
                nnz,
                row_entries(order),
                fac / n,
                est.factor_entries / n,
                c,
                fill_constant(order),
                t.elapsed().as_secs_f64()
            );
            assert_eq!(est.n_dofs, st.n_dofs, "planned and solved unknowns differ");
            // Consistency: the counted plan runs the solve's own ordering and symbolic
            // factorisation on the same pattern (no ports), so the counts are equal.
            let counted = plan_counted(&mesh, &[RegionMaterial::VACUUM], &s).expect("counted");
            assert_eq!(
                counted.factor_entries as usize,
                st.factor_nnz,
                "order {}: counted plan against the solve's factor",
                order.as_int()
            );
            assert!(
                nnz <= row_entries(order),
                "order {}: {nnz:.1} entries per row above the estimate {}",
                order.as_int(),
                row_entries(order)
            );
            assert!(
                fac <= est.factor_entries,
                "order {}: factor {fac:.3e} entries above the estimate {:.3e}",
                order.as_int(),
                est.factor_entries
            );
            assert!(
                c >= OPTIMISTIC_FILL,
                "order {}: fill constant {c:.2} below the optimistic bound {OPTIMISTIC_FILL}",
                order.as_int()
            );
            fits.push((n, fac));
        }
        let growth = (fits[1].1 / fits[0].1).ln() / (fits[1].0 / fits[0].0).ln();
        println!(
            "  order {}: factor growth n^{growth:.2} between the two sizes (model 4/3)",
            order.as_int()
        );
    }
}
