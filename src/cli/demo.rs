//! `embloom demo`: make the invented street-sign data and run inspect, grow and assess on it.

use std::path::Path;

use super::assess::AssessOptions;
use super::grow::GrowOptions;
use super::inspect::render;
use super::progress::show_progress;
use embloom::assess::{AssessConfig, ExternalConfig, MethodId};
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::data::Inspection;
use embloom::demo::{DEMO_SEED, demo_input_space_sets, demo_set};
use embloom::error::Result;
use embloom::io::{self, ReadOptions};
use embloom::probe::KnnParams;
use embloom::probe::LinearParams;
use embloom::probe::ProbeKind;

/// What the demo writes in its folder (listed in the folder's manifest).
const DEMO_FILES: [&str; 5] = [
    "street-signs.npz",
    "street-signs-mirrored.npz",
    "street-signs-brightness.npz",
    "street-signs-grown.npz",
    "report",
];

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
        "keep-left / keep-right) are why a blind flip augmentation is unsafe here; three sign types are rare."
    );
    println!(
        "Two invented input-space sets stand in for crops your backbone would embed after augmenting the images:"
    );
    println!(
        "mirrored crops (a mirrored no-left-turn is labelled no-right-turn) and brightness-jittered crops.\n"
    );

    let data = out.join("street-signs.npz");
    io::write(&data, &demo_set(), false)?;
    let mut external = Vec::new();
    for (name, file, set) in demo_input_space_sets() {
        let path = out.join(file);
        set.write(&path, false)?;
        external.push((name.to_string(), path));
    }
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
    let external_args: String = external
        .iter()
        .map(|(name, path)| format!(" --external {name}={}", path.display()))
        .collect();
    let methods = [
        MethodKind::None,
        MethodKind::Interpolate,
        MethodKind::Extrapolate,
        MethodKind::PrincipalNoise,
        MethodKind::Borderline,
        MethodKind::Adaptive,
        MethodKind::Calibrated,
        MethodKind::Mix,
        MethodKind::Duplicate,
        MethodKind::Reweight,
        MethodKind::LogitAdjust,
    ];
    // The mirrored crops together with interpolate's rows: input space and feature space at once.
    let union = MethodId::Union(vec![
        MethodId::External(external[0].0.clone()),
        MethodId::Kind(MethodKind::Interpolate),
    ]);
    let listed: Vec<String> = methods
        .iter()
        .map(|m| m.name().to_string())
        .chain(external.iter().map(|(n, _)| n.clone()))
        .chain([union.to_string()])
        .collect();
    println!(
        "\n== embloom assess {} --methods {}{external_args} --probes knn,linear (5 grouped folds) --report {}",
        data.display(),
        listed.join(","),
        report.display()
    );
    let config = AssessConfig {
        methods: methods.to_vec(),
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
            external,
            external_config: ExternalConfig {
                budget: Default::default(),
                unions: vec![union],
            },
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
