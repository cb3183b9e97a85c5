//! A long run's report stays small: 200 000 samples (an evening at about 7 frames a second) give a
//! `report.svg` under 3 MB, because each plotted series is thinned to the lowest and highest point
//! of every pixel column before drawing.

mod analysis_common;

use spotlever::analysis::{self, AnalysisOptions};
use spotlever::export::write_results;

#[test]
fn a_200_000_sample_report_stays_under_3_mb() {
    // 5 segments of 3 periods of 500 s, sampled every 37.5 ms: 200 000 samples.
    let r = analysis_common::run(5, 3.0, 0.0375, 2e-6, 0.0, 11);
    assert!(r.samples.len() >= 200_000, "{}", r.samples.len());
    let setup = analysis_common::exact_setup();
    let opts = AnalysisOptions {
        mc_draws: 2000,
        ..Default::default()
    };
    let a = analysis::analyze(&r.samples, &setup, Some(&r.events), &opts).unwrap();
    let dir = tempfile::tempdir().unwrap();
    write_results(dir.path(), &r.samples, &a).unwrap();
    let bytes = std::fs::metadata(dir.path().join("report.svg"))
        .unwrap()
        .len();
    eprintln!("report.svg for 200 000 samples: {bytes} bytes");
    assert!(bytes < 3_000_000, "report.svg is {bytes} bytes");
    // Still a drawing of the whole run: the points of the trace are there.
    let svg = std::fs::read_to_string(dir.path().join("report.svg")).unwrap();
    assert!(
        svg.matches("<circle").count() > 1000,
        "too few points drawn"
    );
}
