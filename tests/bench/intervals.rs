//! Coverage study of the interval kinds (`cargo bench --bench intervals -- [DATASETS
//! [TRAIN_SETS [TEST_PER_CLASS]]]`): prints, per configuration and protocol, each kind's
//! coverage of the Monte Carlo truth with a Wilson interval, its rate of excluding zero, and
//! the ratio of its mean printed width to 2 · 1.96 × the spread of the point estimates.
//! The configurations and the generative model are in `intervals_sim.rs`.

#[path = "intervals_sim.rs"]
mod sim;

use std::time::Instant;

fn main() {
    let args: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let datasets = args.first().copied().unwrap_or(400);
    let train_sets = args.get(1).copied().unwrap_or(300);
    let test_per_class = args.get(2).copied().unwrap_or(2000);
    let started = Instant::now();
    println!(
        "{datasets} data sets per configuration; truth from {train_sets} fresh training sets × {test_per_class} test rows per class"
    );
    println!();
    println!(
        "| configuration | protocol | truth (MC se) | interval | bias | coverage [95% Wilson] | no interval | excludes 0 | width ratio | degenerate printed |"
    );
    println!("|---|---|---|---|---|---|---|---|---|---|");
    for w in sim::worlds() {
        let truth = sim::truth(&w, 5, train_sets, test_per_class, 11);
        for (folds, repeats) in [(5, 1), (5, 3)] {
            let tallies = sim::run(&w, truth, datasets, folds, repeats, 23);
            for t in &tallies {
                let (lo, hi) = t.coverage_interval();
                println!(
                    "| {} | {folds}×{repeats} | {:+.4} ({:.4}) | {} | {:+.4} | {:.3} [{:.3}, {:.3}] | {} | {:.3} | {:.2} | {} |",
                    w.name,
                    truth.delta,
                    truth.mc_se,
                    t.kind,
                    t.bias(truth.delta),
                    t.coverage(),
                    lo,
                    hi,
                    t.datasets - t.with_interval,
                    t.rejection(),
                    t.width_ratio(),
                    t.degenerate_printed
                );
            }
        }
    }
    eprintln!("elapsed {:.0} s", started.elapsed().as_secs_f64());
}
