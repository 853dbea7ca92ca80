//! Long work (batch profiling, placement) on its own thread: a job id at
//! once, `job-progress` while it runs, `job-done` with the result or the
//! error at the end, and cancellation checked between steps.

use crate::error::AppError;
use std::collections::HashMap;
use std::sync::Arc;
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};

use serde::Serialize;
use tauri::{AppHandle, Emitter, Runtime};

use crate::state::lock;

/// Event name of progress reports.
pub const JOB_PROGRESS: &str = "job-progress";
/// Event name of the end of a job.
pub const JOB_DONE: &str = "job-done";

#[derive(Default)]
pub struct Jobs {
    next: AtomicU64,
    running: Mutex<HashMap<u64, Arc<AtomicBool>>>,
}

#[derive(Debug, Clone, Serialize, serde::Deserialize)]
pub struct JobProgress {
    pub job: u64,
    pub done: usize,
    pub total: usize,
    pub label: String,
}

#[derive(Debug, Clone, Serialize, serde::Deserialize)]
pub struct JobDone {
    pub job: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub result: Option<serde_json::Value>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<AppError>,
}

/// What a job's work sees: progress reporting and the cancel flag.
pub struct JobContext<R: Runtime> {
    app: AppHandle<R>,
    pub job: u64,
    cancel: Arc<AtomicBool>,
}

impl<R: Runtime> JobContext<R> {
    pub fn progress(&self, done: usize, total: usize, label: &str) {
        let _ = self.app.emit(
            JOB_PROGRESS,
            JobProgress {
                job: self.job,
                done,
                total,
                label: label.to_string(),
            },
        );
    }

    /// `Err` once the job has been cancelled.
    pub fn check(&self) -> Result<(), AppError> {
        if self.cancel.load(Ordering::Relaxed) {
            Err(AppError::cancelled())
        } else {
            Ok(())
        }
    }

    pub fn app(&self) -> &AppHandle<R> {
        &self.app
    }

    /// The engine's cancel token over this job's flag, for use cases that
    /// check it between their own steps.
    pub fn cancel_token(&self) -> ambit::usecases::Cancel {
        ambit::usecases::Cancel::from_flag(self.cancel.clone())
    }
}

impl Jobs {
    /// Runs `work` on a new thread and returns its job id at once.
    pub fn spawn<R: Runtime>(
        &self,
        app: &AppHandle<R>,
        work: impl FnOnce(&JobContext<R>) -> Result<serde_json::Value, AppError> + Send + 'static,
    ) -> Result<u64, AppError> {
        let job = self.next.fetch_add(1, Ordering::Relaxed) + 1;
        let cancel = Arc::new(AtomicBool::new(false));
        lock(&self.running).insert(job, cancel.clone());
        let context = JobContext {
            app: app.clone(),
            job,
            cancel,
        };
        std::thread::Builder::new()
            .name(format!("ambit-job-{job}"))
            .spawn(move || {
                let outcome = work(&context);
                let app = context.app.clone();
                if let Some(state) = tauri::Manager::try_state::<crate::AppState>(&app) {
                    lock(&state.jobs.running).remove(&job);
                }
                let done = match outcome {
                    Ok(result) => JobDone {
                        job,
                        result: Some(result),
                        error: None,
                    },
                    Err(error) => JobDone {
                        job,
                        result: None,
                        error: Some(error),
                    },
                };
                let _ = app.emit(JOB_DONE, done);
            })
            .map_err(|error| AppError::invalid(format!("cannot start the job: {error}")))?;
        Ok(job)
    }

    /// Asks a job to stop at its next check; an unknown or finished job is not an error.
    pub fn cancel(&self, job: u64) {
        if let Some(flag) = lock(&self.running).get(&job) {
            flag.store(true, Ordering::Relaxed);
        }
    }
}
