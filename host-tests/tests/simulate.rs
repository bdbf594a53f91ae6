//! `deltakin simulate`: the servo loops on the full-dynamics plant track
//! the demo pick better with the core's torque feed-forward than without.

use deltakin_harness::config::RobotFile;
use deltakin_harness::drive::Drive;
use deltakin_harness::plan::{DEMO_MOVES_TOML, MovesFile};
use deltakin_harness::simulate;

/// The demo file's settings with one benchmark pick (25 / 305 / 25 mm).
fn pick_cycle() -> MovesFile {
    let head = DEMO_MOVES_TOML.split("[[move]]").next().unwrap();
    let text = head.replace("start_mm = [0.0, 0.0, -700.0]", "start_mm = [-152.5, 60.0, -760.0]")
        + "[[move]]\nkind = \"pick\"\nto_mm = [152.5, 60.0, -760.0]\nlift_mm = 25.0\nblend_radius_mm = 10.0\n\
           [[move]]\nkind = \"dwell\"\nduration_s = 0.05\n";
    MovesFile::parse(&text).unwrap()
}

#[test]
fn feed_forward_reduces_the_tool_tracking_error_on_the_demo_pick() {
    let (robot, drive, moves) = (RobotFile::demo(), Drive::demo(), pick_cycle());
    let (_, without) = simulate::run(&robot, &drive, &moves, false).unwrap();
    let (samples, with) = simulate::run(&robot, &drive, &moves, true).unwrap();
    eprintln!("without: {without:?}\nwith: {with:?}");
    assert!(samples.len() > 100);
    assert!(with.tool_worst_mm < without.tool_worst_mm, "{with:?} vs {without:?}");
    assert!(with.tool_rms_mm < without.tool_rms_mm, "{with:?} vs {without:?}");
    // The loops hold the tool at all: a sanity bound, a tenth of the move.
    assert!(without.tool_worst_mm < 30.5, "{without:?}");
}
