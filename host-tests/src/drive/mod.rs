//! The drive file: the motor, gearbox and servo-loop data of a machine's
//! three joint drives, read by `deltakin size` (and any command that
//! models the drives). See [`mod@file`] for the format.

pub mod file;

pub use file::{
    ArmDrive, DEMO_DRIVE_TOML, Drive, DriveError, DriveFile, GearboxData, GearboxFile, MotorData, MotorFile, ServoFile,
    ServoGains,
};
