//! The vocal-tract filter: a cascade of second-order formant resonators
//! (Klatt 1980, "Software for a cascade/parallel formant synthesizer",
//! JASA 67, eq. 1–3), with vowel formant tables for men, women and children.
//!
//! F1–F3 are the averages of Peterson & Barney ("Control methods used in a
//! study of the vowels", JASA 24, 1952, Table II), recalled from memory.
//! Their list has no /e/ or /o/ as in "say" / "go"; the nearest vowels they
//! measured are used: /ɛ/ ("head") for /e/ and /ɔ/ ("hawed") for /o/. F4, F5
//! and all bandwidths are typical values from memory.

use serde::{Deserialize, Serialize};

/// The five sung vowels.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Vowel {
    A,
    E,
    I,
    O,
    U,
}

impl Vowel {
    pub const ALL: [Vowel; 5] = [Vowel::A, Vowel::E, Vowel::I, Vowel::O, Vowel::U];
}

/// Whose vocal tract: sets the formant table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TractSize {
    Man,
    Woman,
    Child,
}

/// Formant frequencies and bandwidths, F1 first.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Formants {
    pub frequencies_hz: [f64; 5],
    pub bandwidths_hz: [f64; 5],
}

/// F1–F3 averages of Peterson & Barney 1952, Table II (from memory).
fn peterson_barney_f1_f3(vowel: Vowel, size: TractSize) -> [f64; 3] {
    use TractSize::*;
    use Vowel::*;
    match (vowel, size) {
        // /ɑ/ "hod"
        (A, Man) => [730.0, 1090.0, 2440.0],
        (A, Woman) => [850.0, 1220.0, 2810.0],
        (A, Child) => [1030.0, 1370.0, 3170.0],
        // /ɛ/ "head", standing in for /e/
        (E, Man) => [530.0, 1840.0, 2480.0],
        (E, Woman) => [610.0, 2330.0, 2990.0],
        (E, Child) => [690.0, 2610.0, 3570.0],
        // /i/ "heed"
        (I, Man) => [270.0, 2290.0, 3010.0],
        (I, Woman) => [310.0, 2790.0, 3310.0],
        (I, Child) => [370.0, 3200.0, 3730.0],
        // /ɔ/ "hawed", standing in for /o/
        (O, Man) => [570.0, 840.0, 2410.0],
        (O, Woman) => [590.0, 920.0, 2710.0],
        (O, Child) => [680.0, 1060.0, 3180.0],
        // /u/ "who'd"
        (U, Man) => [300.0, 870.0, 2240.0],
        (U, Woman) => [370.0, 950.0, 2670.0],
        (U, Child) => [430.0, 1170.0, 3260.0],
    }
}

/// Formants of a vowel for a vocal tract (F4, F5 and bandwidths from memory).
pub fn vowel_formants(vowel: Vowel, size: TractSize) -> Formants {
    let [f1, f2, f3] = peterson_barney_f1_f3(vowel, size);
    let (f4, f5): (f64, f64) = match size {
        TractSize::Man => (3300.0, 3750.0),
        TractSize::Woman => (3900.0, 4500.0),
        TractSize::Child => (4300.0, 4900.0),
    };
    // F3 of a child's /i/ can sit close to F4; keep the order strict.
    let f4 = f4.max(f3 + 250.0);
    let f5 = f5.max(f4 + 350.0);
    Formants {
        frequencies_hz: [f1, f2, f3, f4, f5],
        bandwidths_hz: [80.0, 90.0, 120.0, 150.0, 200.0],
    }
}

/// Moves F3–F5 together around `centre_hz`, the clustering that makes the
/// singer's formant (Sundberg, "Articulatory interpretation of the 'singing
/// formant'", JASA 55, 1974: a peak near 2.5–3 kHz in men, a little higher in
/// women). `strength` 0 leaves the formants as they are, 1 clusters fully.
pub fn with_singers_formant(formants: &Formants, centre_hz: f64, strength: f64) -> Formants {
    let strength = strength.clamp(0.0, 1.0);
    let targets = [centre_hz - 250.0, centre_hz + 50.0, centre_hz + 400.0];
    let mut result = *formants;
    for (slot, target) in (2..5).zip(targets) {
        let current = result.frequencies_hz[slot];
        result.frequencies_hz[slot] = current + strength * (target - current);
    }
    // F2 must stay below the cluster (front vowels of women and children).
    result.frequencies_hz[1] = result.frequencies_hz[1].min(result.frequencies_hz[2] - 200.0);
    result
}

/// Formant tuning: when f0 rises above F1, sopranos raise F1 to sit just
/// above f0 (Joliveau, Smith & Wolfe, "Vocal tract resonances in singing:
/// the soprano voice", JASA 116, 2004; Sundberg 1975).
pub fn tune_first_formant(formants: &Formants, f0_hz: f64) -> Formants {
    let mut result = *formants;
    let target = f0_hz * 1.08;
    if target > result.frequencies_hz[0] {
        result.frequencies_hz[0] = target;
        let second_floor = target * 1.3;
        if result.frequencies_hz[1] < second_floor {
            result.frequencies_hz[1] = second_floor;
        }
    }
    result
}

/// One Klatt resonator: y[n] = A x[n] + B y[n−1] + C y[n−2], unity gain at 0 Hz.
#[derive(Debug, Clone, Copy, Default)]
pub struct Resonator {
    a: f64,
    b: f64,
    c: f64,
    y1: f64,
    y2: f64,
}

impl Resonator {
    /// Sets centre frequency and bandwidth (Klatt 1980, eq. 2), keeping state.
    pub fn set(&mut self, frequency_hz: f64, bandwidth_hz: f64, sample_rate: f64) {
        let period = 1.0 / sample_rate;
        let c = -(-2.0 * std::f64::consts::PI * bandwidth_hz * period).exp();
        let b = 2.0
            * (-std::f64::consts::PI * bandwidth_hz * period).exp()
            * (2.0 * std::f64::consts::PI * frequency_hz * period).cos();
        self.a = 1.0 - b - c;
        self.b = b;
        self.c = c;
    }

    /// Makes the resonator pass the signal unchanged (for formants that lie
    /// too close to the Nyquist frequency at low sample rates).
    pub fn bypass(&mut self) {
        self.a = 1.0;
        self.b = 0.0;
        self.c = 0.0;
    }

    pub fn process(&mut self, input: f64) -> f64 {
        let output = self.a * input + self.b * self.y1 + self.c * self.y2;
        self.y2 = self.y1;
        self.y1 = output;
        output
    }
}

/// Five resonators in cascade.
#[derive(Debug, Clone, Default)]
pub struct VocalTract {
    resonators: [Resonator; 5],
}

impl VocalTract {
    pub fn set(&mut self, formants: &Formants, sample_rate: f64) {
        for (index, resonator) in self.resonators.iter_mut().enumerate() {
            let frequency = formants.frequencies_hz[index];
            if frequency < 0.45 * sample_rate {
                resonator.set(frequency, formants.bandwidths_hz[index], sample_rate);
            } else {
                resonator.bypass();
            }
        }
    }

    pub fn process(&mut self, input: f64) -> f64 {
        self.resonators
            .iter_mut()
            .fold(input, |signal, resonator| resonator.process(signal))
    }
}

/// Gain in dB of the cascade at `frequency_hz` (for reasoning and tests).
pub fn cascade_gain_db(formants: &Formants, frequency_hz: f64, sample_rate: f64) -> f64 {
    use rustfft::num_complex::Complex;
    let z = Complex::from_polar(1.0, -std::f64::consts::TAU * frequency_hz / sample_rate);
    let mut gain = Complex::new(1.0, 0.0);
    for index in 0..5 {
        let frequency = formants.frequencies_hz[index];
        if frequency >= 0.45 * sample_rate {
            continue;
        }
        let mut resonator = Resonator::default();
        resonator.set(frequency, formants.bandwidths_hz[index], sample_rate);
        gain *= resonator.a / (1.0 - resonator.b * z - resonator.c * z * z);
    }
    20.0 * gain.norm().log10()
}
