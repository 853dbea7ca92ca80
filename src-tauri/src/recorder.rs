//! Microphone recording: cpal captures the default input device (ALSA on
//! Linux) on its own thread; each block is written to a WAV (hound) in the
//! library's `recordings/` folder and fed to the engine's
//! `StreamingTracker`, whose frames go to the UI as `pitch-frame` events.
//!
//! A take is named `take-<time>-<task>.wav`. Saving the audition copies it
//! into the library by content and removes the take; a take never saved is
//! removed by the library's sweep (unreferenced files older than ten minutes).

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;
use std::thread::JoinHandle;
use std::time::{Duration, SystemTime, UNIX_EPOCH};

use ambit::library::RECORDINGS_DIR;
use ambit::pitch::{hz_to_midi, nearest_name};
use ambit::track::{Frame, StreamingTracker, TrackConfig};
use ambit::voice::Task;
use cpal::traits::{DeviceTrait, HostTrait, StreamTrait};
use cpal::{FromSample, SampleFormat, SizedSample};
use serde::{Deserialize, Serialize};
use tauri::{AppHandle, Emitter, Runtime};

/// Event name of the live pitch trace.
pub const PITCH_FRAME: &str = "pitch-frame";

/// Viterbi lag of the live trace. The offline default (0.25 s) is too late
/// for a trace the singer watches. Measured with `examples/live_latency.rs`
/// (10 ms blocks at 48 kHz), a frame reaches the screen this lag + 30 ms
/// (the half frame after its centre) + up to one block after its centre:
/// 10 ms gives 50 ms, inside the 60 ms budget, and still lets the HMM
/// look one hop ahead. The saved WAV is analysed afterwards with the default
/// configuration.
pub const LIVE_VITERBI_LAG_SECONDS: f64 = 0.01;

/// One frame of the live trace.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct PitchFrame {
    /// Seconds from the start of the take.
    pub time: f64,
    pub f0_hz: Option<f64>,
    /// The nearest note name, when voiced.
    pub note: Option<String>,
    pub confidence: f64,
    pub level_db: f64,
}

/// The tracker configuration of the live trace.
pub fn live_config() -> TrackConfig {
    TrackConfig {
        viterbi_lag_seconds: LIVE_VITERBI_LAG_SECONDS,
        ..TrackConfig::default()
    }
}

/// The live pitch trace: samples in, frames with note names out.
pub struct LivePitch {
    tracker: StreamingTracker,
}

impl LivePitch {
    pub fn new(sample_rate: u32) -> Result<LivePitch, String> {
        LivePitch::with_config(sample_rate, &live_config())
    }

    /// With another tracker configuration (for measuring the trade-offs).
    pub fn with_config(sample_rate: u32, config: &TrackConfig) -> Result<LivePitch, String> {
        StreamingTracker::new(sample_rate, config)
            .map(|tracker| LivePitch { tracker })
            .map_err(|error| format!("live pitch at {sample_rate} Hz: {error}"))
    }

    /// Delay from a frame's centre until it is returned, by the tracker's own account.
    pub fn latency_seconds(&self) -> f64 {
        self.tracker.latency_seconds()
    }

    pub fn push(&mut self, samples: &[f32]) -> Vec<PitchFrame> {
        self.tracker.push(samples).iter().map(pitch_frame).collect()
    }
}

pub fn pitch_frame(frame: &Frame) -> PitchFrame {
    let f0_hz = frame.f0_hz.filter(|_| frame.voiced);
    PitchFrame {
        time: frame.time,
        f0_hz,
        note: f0_hz.and_then(hz_to_midi).map(nearest_name),
        confidence: frame.confidence,
        level_db: frame.level_db,
    }
}

/// The longest take kept: an audition task lasts seconds to a minute or two,
/// so a take still running after ten minutes was forgotten; capture stops
/// there and the take keeps its first ten minutes (bounded disk use).
pub const MAX_TAKE_SECONDS: u32 = 600;

/// Blocks of samples that may wait between the audio callback and the
/// writer (seconds of audio at typical block sizes), so memory stays bounded.
/// The writer and the tracker run hundreds of times faster than real time,
/// so with a microphone the queue stays near empty. Should it ever fill, the
/// callback waits for room: the device's own buffer takes the burst (and
/// the audio backend reports an overrun if that overflows too) rather than
/// the take being silently spliced.
const QUEUED_BLOCKS: usize = 256;

/// A finished take.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct Recorded {
    pub path: PathBuf,
    pub seconds: f64,
    /// Whether capture stopped at [`MAX_TAKE_SECONDS`].
    pub reached_limit: bool,
}

/// A take in progress.
pub struct Recording {
    stop: Arc<AtomicBool>,
    thread: JoinHandle<Result<Recorded, String>>,
}

impl Recording {
    /// Stops capturing and finishes the WAV.
    pub fn stop(self) -> Result<Recorded, String> {
        self.stop.store(true, Ordering::Relaxed);
        self.thread
            .join()
            .map_err(|_| "the recording thread failed".to_string())?
    }
}

/// Whether `path` is a take written by the recorder.
pub fn is_take(path: &Path) -> bool {
    let in_recordings = path
        .parent()
        .and_then(|parent| parent.file_name())
        .is_some_and(|name| name == RECORDINGS_DIR);
    let named = path
        .file_name()
        .and_then(|name| name.to_str())
        .is_some_and(|name| name.starts_with("take-") && name.ends_with(".wav"));
    in_recordings && named
}

/// The message when there is nothing to record from.
pub const NO_INPUT: &str = "no microphone found (this computer has no audio input device); import the recordings from files instead";

/// Starts recording `task` from the default input device; returns once the
/// device is capturing, or with the reason it cannot.
pub fn start<R: Runtime>(
    app: AppHandle<R>,
    library_folder: &Path,
    task: Task,
) -> Result<Recording, String> {
    let stamp = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map_or(0, |elapsed| elapsed.as_millis());
    let folder = library_folder.join(RECORDINGS_DIR);
    std::fs::create_dir_all(&folder).map_err(|error| format!("{}: {error}", folder.display()))?;
    let path = folder.join(format!("take-{stamp}-{}.wav", task.label()));
    let stop = Arc::new(AtomicBool::new(false));
    let (ready_sender, ready) = mpsc::channel::<Result<(), String>>();
    let thread_stop = stop.clone();
    let thread = std::thread::Builder::new()
        .name("ambit-recorder".into())
        .spawn(move || capture(app, path, thread_stop, ready_sender))
        .map_err(|error| format!("cannot start recording: {error}"))?;
    match ready.recv() {
        Ok(Ok(())) => Ok(Recording { stop, thread }),
        Ok(Err(error)) => {
            let _ = thread.join();
            Err(error)
        }
        Err(_) => Err(thread
            .join()
            .ok()
            .and_then(Result::err)
            .unwrap_or_else(|| "the recording thread stopped".into())),
    }
}

fn build_stream<T>(
    device: &cpal::Device,
    config: &cpal::StreamConfig,
    channels: usize,
    sender: mpsc::SyncSender<Vec<f32>>,
    stopping: Arc<AtomicBool>,
) -> Result<cpal::Stream, cpal::Error>
where
    T: SizedSample + Send + 'static,
    f32: FromSample<T>,
{
    device.build_input_stream(
        *config,
        move |data: &[T], _: &cpal::InputCallbackInfo| {
            if stopping.load(Ordering::Relaxed) {
                return;
            }
            // Mono: the mean of the channels of each frame.
            let mono: Vec<f32> = data
                .chunks(channels.max(1))
                .map(|frame| {
                    frame
                        .iter()
                        .map(|sample| sample.to_sample::<f32>())
                        .sum::<f32>()
                        / frame.len() as f32
                })
                .collect();
            // Fails only once the writer has stopped.
            let _ = sender.send(mono);
        },
        |error| eprintln!("ambit: recording: {error}"),
        None,
    )
}

fn capture<R: Runtime>(
    app: AppHandle<R>,
    path: PathBuf,
    stop: Arc<AtomicBool>,
    ready: mpsc::Sender<Result<(), String>>,
) -> Result<Recorded, String> {
    let fail = |message: String| {
        let _ = ready.send(Err(message.clone()));
        Err(message)
    };
    let host = cpal::default_host();
    let Some(device) = host.default_input_device() else {
        return fail(NO_INPUT.into());
    };
    let supported = match device.default_input_config() {
        Ok(config) => config,
        Err(error) => return fail(format!("{NO_INPUT} ({error})")),
    };
    let sample_rate = supported.sample_rate();
    let channels = usize::from(supported.channels());
    let format = supported.sample_format();
    let config: cpal::StreamConfig = supported.into();
    let (sender, blocks) = mpsc::sync_channel::<Vec<f32>>(QUEUED_BLOCKS);
    let stream = match format {
        SampleFormat::F32 => build_stream::<f32>(&device, &config, channels, sender, stop.clone()),
        SampleFormat::I16 => build_stream::<i16>(&device, &config, channels, sender, stop.clone()),
        SampleFormat::I32 => build_stream::<i32>(&device, &config, channels, sender, stop.clone()),
        SampleFormat::U16 => build_stream::<u16>(&device, &config, channels, sender, stop.clone()),
        SampleFormat::I8 => build_stream::<i8>(&device, &config, channels, sender, stop.clone()),
        other => {
            return fail(format!(
                "the microphone's sample format {other} is not supported"
            ));
        }
    };
    let stream = match stream {
        Ok(stream) => stream,
        Err(error) => return fail(format!("cannot open the microphone: {error}")),
    };
    let mut live = match LivePitch::new(sample_rate) {
        Ok(live) => live,
        Err(error) => return fail(error),
    };
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut writer = match hound::WavWriter::create(&path, spec) {
        Ok(writer) => writer,
        Err(error) => return fail(format!("{}: {error}", path.display())),
    };
    if let Err(error) = stream.play() {
        return fail(format!("cannot start the microphone: {error}"));
    }
    let _ = ready.send(Ok(()));
    let limit = u64::from(MAX_TAKE_SECONDS) * u64::from(sample_rate);
    let written = std::cell::Cell::new(0u64);
    let mut write_error = None;
    let mut handle = |mut block: Vec<f32>, writer: &mut hound::WavWriter<_>| {
        let room = limit.saturating_sub(written.get());
        block.truncate(usize::try_from(room).unwrap_or(usize::MAX));
        for sample in &block {
            let value = (sample.clamp(-1.0, 1.0) * f32::from(i16::MAX)) as i16;
            if let Err(error) = writer.write_sample(value) {
                write_error.get_or_insert_with(|| format!("{}: {error}", path.display()));
            }
        }
        written.set(written.get() + block.len() as u64);
        for frame in live.push(&block) {
            let _ = app.emit(PITCH_FRAME, frame);
        }
    };
    while !stop.load(Ordering::Relaxed) && written.get() < limit {
        match blocks.recv_timeout(Duration::from_millis(50)) {
            Ok(block) => handle(block, &mut writer),
            Err(mpsc::RecvTimeoutError::Timeout) => {}
            Err(mpsc::RecvTimeoutError::Disconnected) => break,
        }
    }
    // The callback sends nothing once `stop` is set; empty the queue so a
    // callback waiting for room returns, then close the device.
    stop.store(true, Ordering::Relaxed);
    while let Ok(block) = blocks.try_recv() {
        handle(block, &mut writer);
    }
    drop(stream);
    while let Ok(block) = blocks.try_recv() {
        handle(block, &mut writer);
    }
    if let Some(error) = write_error {
        return Err(error);
    }
    writer
        .finalize()
        .map_err(|error| format!("{}: {error}", path.display()))?;
    let written = written.get();
    Ok(Recorded {
        seconds: written as f64 / f64::from(sample_rate),
        reached_limit: written >= limit,
        path,
    })
}
