//! Progress display on stderr: a spinner with a message per stage. Hidden when stderr
//! is not a terminal (scripts, CI, pipes), so logs stay clean.

use antinode_solver::driven::DriveStage;
use antinode_solver::modes::Stage;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::time::Duration;

/// A spinner for one long step.
pub struct Spinner {
    bar: ProgressBar,
}

impl Spinner {
    /// Starts a spinner showing `message` (hidden when stderr is not a terminal).
    pub fn start(message: &str) -> Self {
        let bar = ProgressBar::new_spinner();
        if std::io::stderr().is_terminal() {
            bar.set_draw_target(ProgressDrawTarget::stderr());
            if let Ok(style) = ProgressStyle::with_template("{spinner} [{elapsed}] {msg}") {
                bar.set_style(style);
            }
            bar.enable_steady_tick(Duration::from_millis(120));
        } else {
            bar.set_draw_target(ProgressDrawTarget::hidden());
        }
        bar.set_message(message.to_string());
        Self { bar }
    }

    /// Replaces the message.
    pub fn set(&self, message: String) {
        self.bar.set_message(message);
    }

    /// Shows a solver stage.
    pub fn stage(&self, stage: Stage) {
        self.set(match stage {
            Stage::Topology => "numbering edges and faces".to_string(),
            Stage::Assembly { n_dofs } => format!("assembling matrices ({n_dofs} unknowns)"),
            Stage::Factorization { n_dofs, nnz } => {
                format!("factorising K − σM ({n_dofs} unknowns, {nnz} non-zeros)")
            }
            Stage::Eigen(p) => format!(
                "eigen iteration: restart {}, {}/{} modes converged, {} solves",
                p.restarts, p.converged, p.wanted, p.applications
            ),
            Stage::Checks => "checking residuals and divergence".to_string(),
        });
    }

    /// Shows a stage of the driven solve.
    pub fn drive_stage(&self, stage: DriveStage) {
        self.set(match stage {
            DriveStage::Assembly => "assembling the driven system".to_string(),
            DriveStage::Factorization { freq_hz, n_dofs } => format!(
                "sweep: factorising at {:.4} GHz ({n_dofs} complex unknowns) and building \
                 its Krylov space",
                freq_hz * 1e-9
            ),
            DriveStage::Fields { freq_hz } => {
                format!("fields at {:.4} GHz", freq_hz * 1e-9)
            }
        });
    }

    /// Removes the spinner.
    pub fn finish(self) {
        self.bar.finish_and_clear();
    }
}
