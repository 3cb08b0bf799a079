//! Tests of the drivers: transactions on mocked outputs, the hold estimate against an f64
//! simulation of the PWM-held coil, faults, and properties over arbitrary readings.

mod boost;
mod faults;
mod hold_accuracy;
mod motor_physics;
mod motor_restart;
mod motor_support;
mod motor_transactions;
mod movement;
mod props;
mod support;
mod transactions;
