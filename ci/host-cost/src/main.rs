//! `deltakin-host-cost CALL PASSES`: builds the demo robot and the bench
//! points (`benches/shared/demo_robot.rs`), then runs CALL over every point
//! PASSES times. CALL is `none` (the setup alone), `inverse_f32` /
//! `forward_f32` (deltakin's guarded calls) or `inverse_textbook` /
//! `forward_textbook` (the plain f64 closed form of
//! `benches/shared/textbook.rs`). `ci/host-cost.sh` counts the
//! instructions of each run under callgrind and subtracts the `none` run:
//! the setup is the same in every run, so the difference is the calls.
//! Prints the number of calls made.

use std::hint::black_box;
use std::process::ExitCode;

#[path = "../../../benches/shared/demo_robot.rs"]
#[allow(dead_code)]
mod demo_robot;
#[path = "../../../benches/shared/textbook.rs"]
mod textbook;

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().collect();
    let (Some(call), Some(Ok(passes))) = (args.get(1), args.get(2).map(|p| p.parse::<usize>())) else {
        eprintln!("usage: deltakin-host-cost none|inverse_f32|forward_f32|inverse_textbook|forward_textbook PASSES");
        return ExitCode::from(2);
    };
    let robot = demo_robot::robot::<f32>();
    let book = textbook::Textbook::new(
        demo_robot::BASE_RADIUS_MM,
        demo_robot::PLATFORM_RADIUS_MM,
        demo_robot::UPPER_ARM_MM,
        demo_robot::LOWER_ARM_MM,
    );
    let points64 = demo_robot::points();
    let joints64 = demo_robot::joints(&points64);
    let points: Vec<[f32; 3]> = demo_robot::convert(&points64);
    let joints: Vec<[f32; 3]> = demo_robot::convert(&joints64);
    let mut calls = 0usize;
    for _ in 0..passes {
        match call.as_str() {
            "none" => {}
            "inverse_f32" => points.iter().for_each(|&p| {
                let _ = black_box(robot.inverse(black_box(p)));
            }),
            "forward_f32" => joints.iter().for_each(|&j| {
                let _ = black_box(robot.forward(black_box(j)));
            }),
            "inverse_textbook" => points64.iter().for_each(|&p| {
                black_box(book.inverse(black_box(p)));
            }),
            "forward_textbook" => joints64.iter().for_each(|&j| {
                black_box(book.forward(black_box(j)));
            }),
            other => {
                eprintln!("deltakin-host-cost: unknown call {other}");
                return ExitCode::from(2);
            }
        }
        calls += points.len();
    }
    println!("{calls}");
    ExitCode::SUCCESS
}
