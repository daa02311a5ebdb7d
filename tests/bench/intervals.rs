//! Coverage study of the interval kinds (`cargo bench --bench intervals -- [DATASETS
//! [TRAIN_SETS [TEST_PER_CLASS]]]`): prints, per configuration and protocol, each kind's
//! coverage of the Monte Carlo truth with a Wilson interval, its rate of excluding zero, and
//! the ratio of its mean printed width to 2 · 1.96 × the spread of the point estimates.
//! The configurations and the generative model are in `intervals_sim.rs`.
//!
//! `cargo bench --bench intervals -- dump FILE [DATASETS [TRAIN_SETS [TEST_PER_CLASS]]]`
//! writes every test row's outcome of the same simulation to FILE (CSV) and the truths to
//! FILE.truth.csv instead, for `tests/bench/intervals_decompose.py`.
//!
//! Two experiments with intervals that refit the whole assessment on perturbed data (the
//! README's "Refitting on perturbed data sets"; neither is an interval kind of the library):
//! `cargo bench --bench intervals -- jackknife DATASETS GROUPS TRAIN_SETS` deletes one of
//! GROUPS class-stratified groups of rows at a time (delete-a-group jackknife) and also reports
//! the augmentation noise (same folds, another seed); `cargo bench --bench intervals --
//! wholeboot DATASETS RESAMPLES TRAIN_SETS` reassesses class-stratified bootstrap resamples of
//! each data set.

#[path = "intervals_sim.rs"]
mod sim;

#[path = "intervals_keyed.rs"]
mod keyed;

use std::io::Write;
use std::time::Instant;

fn main() {
    let raw: Vec<String> = std::env::args().skip(1).collect();
    let dump = raw
        .iter()
        .position(|a| a == "dump")
        .and_then(|i| raw.get(i + 1).cloned());
    let args: Vec<usize> = raw.iter().filter_map(|a| a.parse().ok()).collect();
    let datasets = args.first().copied().unwrap_or(400);
    let train_sets = args.get(1).copied().unwrap_or(300);
    let test_per_class = args.get(2).copied().unwrap_or(2000);
    let started = Instant::now();
    if raw.iter().any(|a| a == "keyed") {
        keyed_main(datasets, train_sets, test_per_class);
        eprintln!("elapsed {:.0} s", started.elapsed().as_secs_f64());
        return;
    }
    if raw.iter().any(|a| a == "wholeboot") {
        wholeboot_main(datasets, train_sets, test_per_class);
        eprintln!("elapsed {:.0} s", started.elapsed().as_secs_f64());
        return;
    }
    if raw.iter().any(|a| a == "jackknife") {
        jackknife_main(datasets, train_sets, test_per_class);
        eprintln!("elapsed {:.0} s", started.elapsed().as_secs_f64());
        return;
    }
    if let Some(path) = dump {
        write_outcomes(&path, datasets, train_sets, test_per_class);
        eprintln!("elapsed {:.0} s", started.elapsed().as_secs_f64());
        return;
    }
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

/// The `dump` mode: every configuration's truth and test-row outcomes, written to temporary
/// files renamed into place at the end so that an interrupted run leaves no partial file.
fn write_outcomes(path: &str, datasets: usize, train_sets: usize, test_per_class: usize) {
    let (tmp, truth_path) = (format!("{path}.partial"), format!("{path}.truth.csv"));
    let mut out = std::io::BufWriter::new(std::fs::File::create(&tmp).unwrap());
    let mut truths = String::from("world,name,truth,mc_se\n");
    writeln!(
        out,
        "world,protocol,dataset,repeat,fold,train_real,row,label,method_pred,baseline_pred"
    )
    .unwrap();
    for (wi, w) in sim::worlds().iter().enumerate() {
        let truth = sim::truth(w, 5, train_sets, test_per_class, 11);
        truths.push_str(&format!(
            "{wi},{},{},{}\n",
            w.name, truth.delta, truth.mc_se
        ));
        for (pi, (folds, repeats)) in [(5, 1), (5, 3)].into_iter().enumerate() {
            for lines in sim::outcomes(w, datasets, folds, repeats, 23) {
                for line in lines.lines() {
                    writeln!(out, "{wi},{pi},{line}").unwrap();
                }
            }
        }
    }
    out.flush().unwrap();
    drop(out);
    std::fs::write(&truth_path, truths).unwrap();
    std::fs::rename(&tmp, path).unwrap();
}

/// The `jackknife` experiment: per configuration and protocol, the variance V of the estimate
/// across data sets, the augmentation noise, and the jackknife intervals' tallies.
fn jackknife_main(datasets: usize, groups: usize, train_sets: usize) {
    for w in sim::worlds() {
        let truth = sim::truth(&w, 5, train_sets, 1000, 11);
        for (folds, repeats) in [(5, 1), (5, 3)] {
            let t0 = Instant::now();
            let (trials, noise, v) =
                sim::jackknife_trial(&w, truth, datasets, folds, repeats, groups, 23);
            let extra = format!("V {v:.3e} aug-noise {noise:.3e}");
            print_trials(&w, (folds, repeats), truth.delta, &extra, t0, &trials);
        }
    }
}

/// The `wholeboot` experiment: the bootstrap intervals' tallies, beside `cv-clt` on the same
/// data sets.
fn wholeboot_main(datasets: usize, boots: usize, train_sets: usize) {
    for w in sim::worlds() {
        let truth = sim::truth(&w, 5, train_sets, 1000, 11);
        for (folds, repeats) in [(5, 1), (5, 3)] {
            let t0 = Instant::now();
            let trials = sim::bootstrap_trial(&w, truth, datasets, folds, repeats, boots, 23);
            print_trials(&w, (folds, repeats), truth.delta, "", t0, &trials);
        }
    }
}

/// The `keyed` experiment: the jackknife when growth's draws are keyed by row identity.
fn keyed_main(datasets: usize, groups: usize, train_sets: usize) {
    for w in sim::worlds() {
        let truth = keyed::truth(&w, 5, train_sets, 1000);
        for (folds, repeats) in [(5, 1), (5, 3)] {
            let t0 = Instant::now();
            let (trials, noise, v) =
                keyed::jackknife(&w, truth, datasets, folds, repeats, groups, 23);
            let extra = format!("V {v:.3e} aug-noise {noise:.3e}");
            print_trials(&w, (folds, repeats), truth.delta, &extra, t0, &trials);
        }
    }
}

/// One experiment's lines for a configuration and protocol: the truth, `extra`, the time
/// taken, then each trial's tally.
fn print_trials(
    w: &sim::World,
    (folds, repeats): (usize, usize),
    truth: f64,
    extra: &str,
    t0: Instant,
    trials: &[sim::Trial],
) {
    println!(
        "{} {folds}x{repeats} truth {truth:+.4} {extra} ({:.0} s)",
        w.name,
        t0.elapsed().as_secs_f64()
    );
    for t in trials {
        println!("  {}", t.line());
    }
}
