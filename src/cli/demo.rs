//! `embloom demo`: make the invented street-sign data and run inspect, grow and assess on it.

use std::path::Path;

use super::assess::AssessOptions;
use super::grow::GrowOptions;
use super::inspect::render;
use super::progress::show_progress;
use embloom::assess::AssessConfig;
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::data::Inspection;
use embloom::demo::{DEMO_SEED, demo_set};
use embloom::error::Result;
use embloom::io::{self, ReadOptions};
use embloom::probe::KnnParams;
use embloom::probe::LinearParams;
use embloom::probe::ProbeKind;

/// What the demo writes in its folder (listed in the folder's manifest).
const DEMO_FILES: [&str; 3] = ["street-signs.npz", "street-signs-grown.npz", "report"];

/// Write the demo data to `out` and run the three commands on it.
pub fn demo(out: &Path, force: bool, quiet: bool) -> Result<()> {
    embloom::io::output_target::prepare_own_dir(out, force, &DEMO_FILES)?;
    println!(
        "embloom demo — INVENTED DATA: street-sign crops from a fictional survey of the city of Lanterbury,"
    );
    println!(
        "embedded in 256 dimensions by an imaginary frozen backbone. Mirror pairs (no-left-turn / no-right-turn,"
    );
    println!(
        "keep-left / keep-right) are why a flip augmentation is unsafe here; three sign types are rare.\n"
    );

    let data = out.join("street-signs.npz");
    io::write(&data, &demo_set(), false)?;
    let read = ReadOptions::default();
    let loaded = io::read(&data, &read)?;
    println!("== embloom inspect {}", data.display());
    print!(
        "{}",
        render(&Inspection::of(
            &data,
            &loaded.dataset,
            loaded.origin.as_deref()
        ))
    );

    let grown = out.join("street-signs-grown.npz");
    println!(
        "\n== embloom grow {} --method interpolate --target median -o {}",
        data.display(),
        grown.display()
    );
    let summary = super::grow::execute(&GrowOptions {
        input: data.clone(),
        output: grown,
        read: read.clone(),
        method: MethodKind::Interpolate,
        target: Target::Median,
        classes: None,
        params: AugmentParams::default(),
        unit_norm: UnitNorm::Auto,
        seed: DEMO_SEED,
        force: false,
        max_memory: None,
    })?;
    print!("{}", summary.render());

    let report = out.join("report");
    println!(
        "\n== embloom assess {} (5 grouped folds, knn + linear probes) --report {}",
        data.display(),
        report.display()
    );
    let config = AssessConfig {
        methods: vec![
            MethodKind::None,
            MethodKind::Interpolate,
            MethodKind::Extrapolate,
            MethodKind::PrincipalNoise,
            MethodKind::GaussianNoise,
        ],
        probes: vec![ProbeKind::Knn, ProbeKind::Linear],
        folds: 5,
        repeats: 1,
        target: Target::Median,
        classes: None,
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Auto,
        knn: KnnParams::default(),
        linear: LinearParams::default(),
        interval: embloom::eval::IntervalKind::default(),
        seed: DEMO_SEED,
        diagnostics: true,
    };
    let results = super::assess::execute(
        &AssessOptions {
            input: data,
            read,
            config,
            external: Vec::new(),
            external_config: Default::default(),
            report: Some(report.clone()),
            force: false,
            max_memory: None,
        },
        show_progress(quiet),
    )?;
    print!("{}", embloom::report::terminal_table(&results));
    embloom::io::output_target::write_manifest(out, "demo", &DEMO_FILES.map(String::from))?;
    println!("\nreport: {}", report.join("report.html").display());
    Ok(())
}
