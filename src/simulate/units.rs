//! Units of the simulation: the energy unit of state energies and widths (cm^-1, eV, THz) and
//! the time unit of delays and lifetimes (fs, ps), with their conversion to the angular
//! frequencies (rad/fs) and femtoseconds used inside the simulator.

use serde::Serialize;
use std::f64::consts::TAU;

/// Speed of light in cm/fs (exact by the SI definition of the metre).
const C_CM_PER_FS: f64 = 2.997_924_58e-5;
/// Reduced Planck constant in eV fs (CODATA 2018, exact in the 2019 SI).
const HBAR_EV_FS: f64 = 0.658_211_956_9;

/// The unit in which state energies, dephasing widths, inhomogeneous widths and the rotating
/// frame are written.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum EnergyUnit {
    /// Wavenumbers, cm^-1: `omega = 2 pi c nu`.
    #[serde(rename = "cm-1")]
    Wavenumber,
    /// Electronvolts: `omega = E / hbar`.
    #[serde(rename = "eV")]
    ElectronVolt,
    /// Terahertz (ordinary frequency): `omega = 2 pi f`.
    #[serde(rename = "THz")]
    Terahertz,
}

impl EnergyUnit {
    /// Parse `cm-1`, `eV` or `THz` (case-insensitive; `cm^-1` and `wavenumber` accepted).
    pub fn parse(text: &str) -> Option<EnergyUnit> {
        match text.trim().to_ascii_lowercase().as_str() {
            "cm-1" | "cm^-1" | "1/cm" | "wavenumber" | "wavenumbers" => {
                Some(EnergyUnit::Wavenumber)
            }
            "ev" => Some(EnergyUnit::ElectronVolt),
            "thz" => Some(EnergyUnit::Terahertz),
            _ => None,
        }
    }

    /// The unit as written in files and on axes: `cm-1`, `eV`, `THz`.
    pub fn label(self) -> &'static str {
        match self {
            EnergyUnit::Wavenumber => "cm-1",
            EnergyUnit::ElectronVolt => "eV",
            EnergyUnit::Terahertz => "THz",
        }
    }

    /// Angular frequency in rad/fs of one unit.
    pub fn rad_per_fs(self) -> f64 {
        match self {
            EnergyUnit::Wavenumber => TAU * C_CM_PER_FS,
            EnergyUnit::ElectronVolt => 1.0 / HBAR_EV_FS,
            EnergyUnit::Terahertz => TAU * 1e-3,
        }
    }

    /// A value in this unit as an angular frequency in rad/fs.
    pub fn to_angular(self, value: f64) -> f64 {
        value * self.rad_per_fs()
    }

    /// An angular frequency in rad/fs expressed in this unit.
    pub fn from_angular(self, omega: f64) -> f64 {
        omega / self.rad_per_fs()
    }
}

/// The unit of delays and lifetimes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum TimeUnit {
    /// Femtoseconds.
    #[serde(rename = "fs")]
    Femtosecond,
    /// Picoseconds.
    #[serde(rename = "ps")]
    Picosecond,
}

impl TimeUnit {
    /// Parse `fs` or `ps`.
    pub fn parse(text: &str) -> Option<TimeUnit> {
        match text.trim().to_ascii_lowercase().as_str() {
            "fs" => Some(TimeUnit::Femtosecond),
            "ps" => Some(TimeUnit::Picosecond),
            _ => None,
        }
    }

    /// `fs` or `ps`.
    pub fn label(self) -> &'static str {
        match self {
            TimeUnit::Femtosecond => "fs",
            TimeUnit::Picosecond => "ps",
        }
    }

    /// Femtoseconds in one unit.
    pub fn fs(self) -> f64 {
        match self {
            TimeUnit::Femtosecond => 1.0,
            TimeUnit::Picosecond => 1000.0,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conversions_match_textbook_constants() {
        // 1 eV = 8065.544 cm^-1 = 241.7990 THz (CODATA 2018 via NIST, (memory)).
        let ev = EnergyUnit::ElectronVolt.to_angular(1.0);
        let cm = EnergyUnit::Wavenumber.from_angular(ev);
        let thz = EnergyUnit::Terahertz.from_angular(ev);
        assert!((cm - 8065.544).abs() < 0.01, "{cm}");
        assert!((thz - 241.799).abs() < 0.001, "{thz}");
        // A 2000 cm^-1 vibration has a period of 16.68 fs (common practice).
        let period = TAU / EnergyUnit::Wavenumber.to_angular(2000.0);
        assert!((period - 16.678).abs() < 0.001, "{period}");
    }
}
