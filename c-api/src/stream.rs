//! The setpoint stream in caller storage: start it, push moves (validated
//! on push, every cycle), take one setpoint per control cycle. In f32 and
//! in fixed point (moves planned in f32 for both, as in the core).

use deltakin::motion::{Bounds, JointRateLimits, Law, Move, Stream, StreamSetpoint};
use deltakin::{Fixed, FixedWide};

use crate::access::{clear, held, held_mut, input, output, store};
use crate::kinematics::triple;
use crate::robot::{finish, plain};
use crate::status::{DeltakinFault, DeltakinStatus, from_motion};
use crate::storage::{DeltakinRobotF32, DeltakinRobotQ, DeltakinStreamF32, DeltakinStreamQ};
use crate::types::{
    DeltakinAcceptedF32, DeltakinMoveF32, DeltakinRateLimitsF32, DeltakinSetpointF32, DeltakinSetpointQ,
};

type Failure = (DeltakinStatus, DeltakinFault);

/// The core's move from the C one, or `BadCode`.
fn to_move(m: &DeltakinMoveF32) -> Result<Move<f32>, Failure> {
    let law = match m.law {
        0 => Law::Trapezoid,
        1 => Law::SCurve,
        2 => Law::Poly7,
        _ => return Err(plain(DeltakinStatus::BadCode)),
    };
    let bounds = Bounds { speed: m.speed, accel: m.accel, jerk: m.jerk };
    Ok(match m.kind {
        0 => Move::Line { to: m.to, law, bounds },
        1 => Move::Pick { to: m.to, lift: m.lift_mm, blend_radius: m.blend_radius_mm, law, bounds },
        2 => Move::Dwell { duration: m.duration_s },
        3 => Move::Joint { to: m.to, law, bounds },
        _ => return Err(plain(DeltakinStatus::BadCode)),
    })
}

fn limits(l: &DeltakinRateLimitsF32) -> JointRateLimits<f32> {
    JointRateLimits { speed: l.speed_rad_s, accel: l.accel_rad_s2 }
}

/// Starts a stream (f32) at rest at `start_mm` (mm), emitting one setpoint
/// every `period_s` seconds, keeping joint speeds and accelerations inside
/// `limits`. The stream keeps its own copy of the robot.
///
/// # Errors
/// `NULL_POINTER`, `NOT_INITIALISED` (robot), `INVALID_MOVE` (period or a
/// limit not positive and finite), or the guarded inverse kinematics'
/// status at the start. On error the storage is marked uninitialised.
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_stream_init_f32(
    stream: *mut DeltakinStreamF32,
    robot: *const DeltakinRobotF32,
    period_s: f32,
    limits_: *const DeltakinRateLimitsF32,
    start_mm: *const f32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        if stream.is_null() {
            return Err(plain(DeltakinStatus::NullPointer));
        }
        // SAFETY: non-null, caller's contract.
        unsafe { clear(stream) };
        // SAFETY: caller's contract.
        let (robot, l, start) =
            unsafe { (held(robot).map_err(plain)?, input(limits_).map_err(plain)?, triple(start_mm)?) };
        let value = Stream::new(*robot, period_s, limits(l), start).map_err(from_motion)?;
        // SAFETY: non-null, caller's contract.
        unsafe { store(stream, value) };
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Starts a fixed-point stream: as `deltakin_stream_init_f32`, with the
/// start `start_mm` in Q18.14 mm; period and limits in float (planning).
///
/// # Errors
/// As `deltakin_stream_init_f32`.
///
/// # Safety
/// As `deltakin_inverse_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_stream_init_q(
    stream: *mut DeltakinStreamQ,
    robot: *const DeltakinRobotQ,
    period_s: f32,
    limits_: *const DeltakinRateLimitsF32,
    start_mm: *const i32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        if stream.is_null() {
            return Err(plain(DeltakinStatus::NullPointer));
        }
        // SAFETY: non-null, caller's contract.
        unsafe { clear(stream) };
        // SAFETY: caller's contract.
        let (robot, l, start) =
            unsafe { (held(robot).map_err(plain)?, input(limits_).map_err(plain)?, triple(start_mm)?) };
        let value = Stream::new(*robot, period_s, limits(l), start.map(FixedWide::from_raw)).map_err(from_motion)?;
        // SAFETY: non-null, caller's contract.
        unsafe { store(stream, value) };
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Validates `move_` from where the queue ends (every cycle through the
/// guarded kinematics, joint speeds and accelerations, slowing the move if
/// needed) and queues it; `accepted` (may be NULL) receives its id and
/// length. Costs as many setpoints as the move has cycles: call it outside
/// the control interrupt.
///
/// # Errors
/// `NULL_POINTER`, `NOT_INITIALISED`, `BAD_CODE` (kind or law), a motion
/// status (`INVALID_MOVE`, `TOO_LONG`, `QUEUE_FULL`, `JOINT_SPEED`, ...) or
/// a kinematic one with the cycle and arm in `fault`.
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_stream_push_f32(
    stream: *mut DeltakinStreamF32,
    move_: *const DeltakinMoveF32,
    accepted: *mut DeltakinAcceptedF32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (s, m) = unsafe { (held_mut(stream).map_err(plain)?, input(move_).map_err(plain)?) };
        let a = s.push(&to_move(m)?).map_err(from_motion)?;
        // SAFETY: caller's contract (NULL allowed).
        if let Ok(out) = unsafe { output(accepted) } {
            *out = DeltakinAcceptedF32 {
                id: a.id,
                cycles: a.cycles,
                stretch: a.stretch,
                time_scaled: a.time_scaled.into(),
            };
        }
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// Queues a move on a fixed-point stream: as `deltakin_stream_push_f32`
/// (the move in float, planned in f32, streamed in fixed point).
///
/// # Errors
/// As `deltakin_stream_push_f32`.
///
/// # Safety
/// As `deltakin_inverse_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_stream_push_q(
    stream: *mut DeltakinStreamQ,
    move_: *const DeltakinMoveF32,
    accepted: *mut DeltakinAcceptedF32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (s, m) = unsafe { (held_mut(stream).map_err(plain)?, input(move_).map_err(plain)?) };
        let a = s.push(&to_move(m)?).map_err(from_motion)?;
        // SAFETY: caller's contract (NULL allowed).
        if let Ok(out) = unsafe { output(accepted) } {
            *out = DeltakinAcceptedF32 {
                id: a.id,
                cycles: a.cycles,
                stretch: a.stretch,
                time_scaled: a.time_scaled.into(),
            };
        }
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// The next control cycle's setpoint, written to `setpoint`. One setpoint
/// of the running move (time law, path, guarded inverse kinematics,
/// Jacobian); no loop.
///
/// # Errors
/// `STREAM_IDLE` when no move is queued (nothing written; the platform
/// rests where the last move ended); `NULL_POINTER`, `NOT_INITIALISED`; a
/// kinematic status only if a queued move fails, which the validation on
/// push excludes (the queue is then cleared).
///
/// # Safety
/// As `deltakin_inverse_f32`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_stream_next_f32(
    stream: *mut DeltakinStreamF32,
    setpoint: *mut DeltakinSetpointF32,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (s, out) = unsafe { (held_mut(stream).map_err(plain)?, output(setpoint).map_err(plain)?) };
        let Some(StreamSetpoint { move_id, setpoint: p }) = s.next_setpoint().map_err(from_motion)? else {
            return Err(plain(DeltakinStatus::StreamIdle));
        };
        *out = DeltakinSetpointF32 {
            position_mm: p.position,
            joints_rad: p.joints,
            joint_rates_rad_s: p.joint_rates,
            move_id,
            cycle: p.cycle,
            end_of_move: p.end_of_move.into(),
        };
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}

/// The next setpoint of a fixed-point stream: position Q18.14 mm, joints
/// Q7.25 rad, rates Q18.14 rad/s.
///
/// # Errors
/// As `deltakin_stream_next_f32`.
///
/// # Safety
/// As `deltakin_inverse_q`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn deltakin_stream_next_q(
    stream: *mut DeltakinStreamQ,
    setpoint: *mut DeltakinSetpointQ,
    fault: *mut DeltakinFault,
) -> DeltakinStatus {
    let r = (|| {
        // SAFETY: caller's contract.
        let (s, out) = unsafe { (held_mut(stream).map_err(plain)?, output(setpoint).map_err(plain)?) };
        let Some(StreamSetpoint { move_id, setpoint: p }) = s.next_setpoint().map_err(from_motion)? else {
            return Err(plain(DeltakinStatus::StreamIdle));
        };
        *out = DeltakinSetpointQ {
            position_mm: p.position.map(FixedWide::to_raw),
            joints_rad: p.joints.map(Fixed::to_raw),
            joint_rates_rad_s: p.joint_rates.map(FixedWide::to_raw),
            move_id,
            cycle: p.cycle,
            end_of_move: p.end_of_move.into(),
        };
        Ok(())
    })();
    // SAFETY: caller's contract on `fault`.
    unsafe { finish(fault, r) }
}
