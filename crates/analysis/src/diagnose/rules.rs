//! Every threshold of the band choice and the location call, in one table, each with its physics and
//! what it was checked on ("sim" = the hardened simulator corpus, `tests/location_corpus.rs`; "CWRU" =
//! the 53 CWRU 12 kHz drive-end records, `tests/cwru.rs`).

pub use crate::stage::rules::Rule;

/// A family is "present" at this envelope score.
pub const PRESENT_DB: Rule = Rule {
    id: "location_present_db",
    value: 12.0,
    unit: "dB over envelope background",
    meaning: "a fault family at least this far above the local envelope-spectrum floor (mean of its two strongest of the first three harmonics) is present",
    source: "unchanged from before; pure Gaussian noise stays below it (unit test, 6 seeds); checked on sim (healthy none) and CWRU 97",
};

/// Harmonics a present family needs.
pub const PRESENT_HARMONICS: Rule = Rule {
    id: "location_present_harmonics",
    value: 2.0,
    unit: "harmonics at 10 dB",
    meaning: "a periodic defect gives a comb, not a single line: at least two harmonics must stand 10 dB over their floor",
    source: "physics (impact trains are periodic); checked on sim and CWRU",
};

/// The best family must beat the runner-up by this margin, else "unclear".
pub const MARGIN_DB: Rule = Rule {
    id: "location_margin_db",
    value: 4.0,
    unit: "dB",
    meaning: "when the best family's score does not beat the runner-up's by this much, the call is \"unclear\" with both named",
    source: "envelope line levels over a median floor scatter by a few dB on noise alone (exponential statistics of a squared envelope); checked on sim and CWRU (ball records)",
};

/// Cage needs this many FTF harmonics.
pub const CAGE_HARMONICS: Rule = Rule {
    id: "cage_min_harmonics",
    value: 3.0,
    unit: "FTF harmonics at 10 dB",
    meaning: "a cage defect strikes once per cage turn, a comb of many FTF harmonics; load-zone modulation of a ball train at FTF gives only the first one or two",
    source: "physics (impulse train versus smooth modulation); checked on sim (ball trains modulated at FTF) and CWRU 185-188",
};

/// A notch in the FTF comb that marks load-zone modulation rather than a cage defect.
pub const CAGE_NOTCH_DB: Rule = Rule {
    id: "cage_comb_notch_db",
    value: 6.0,
    unit: "dB under the mean of its two neighbours",
    meaning: "when one of the 2nd-4th FTF harmonics stands this far under the mean of the harmonics either side of it, the FTF comb is read as the load-zone window of a damaged rolling element carried round at cage speed, and a cage call becomes \"unclear\" (cage or rolling element)",
    source: "physics (a damaged element is struck only while it passes the load zone, a window of a fixed share of each cage turn, about half a turn under a radial load with little clearance (from memory, rolling-bearing load-distribution texts); the Fourier series of such a window has deep minima at some harmonics, the even ones for a half turn, while a cage defect strikes once per turn, a comb without minima); checked on sim (deepest notch on a true cage reading 4.5 dB, none lost) and CWRU (ball records 187 and 188: 8.5 and 10.3 dB at the 2nd harmonic, called cage before, now unclear)",
};

/// Rolling-element evidence that explains FTF lines as ball-train modulation.
pub const BALL_TRAIN_DB: Rule = Rule {
    id: "ball_train_support_db",
    value: 8.0,
    unit: "dB",
    meaning: "when the 2xBSF family scores at least this much, FTF lines are read as the cage carrying a damaged ball through the load zone, not as a cage defect",
    source: "physics (a faulty ball is modulated at FTF); checked on sim and CWRU 185-188",
};

/// Remove discrete lines when they hold this share of the power above the defect region.
pub const TONAL_FRACTION: Rule = Rule {
    id: "discrete_lines_tonal_fraction",
    value: 0.2,
    unit: "share of power",
    meaning: "shaft-synchronous discrete lines are removed before the band search when such lines 10 dB over their neighbourhood hold at least this share of the power above 3x the highest defect rate (gear mesh and other tones would otherwise mask the impacts)",
    source: "physics (discrete components mask the random impact signal; REFERENCES 4.3); checked on sim (gear mesh; 0.05 and 0.2 score the same, 88/96) and CWRU (0.2 keeps normal record 97 at none; 0.05 calls it unclear)",
};

/// A line this many times (amplitude) over its neighbourhood's median is discrete.
pub const LINE_FACTOR: Rule = Rule {
    id: "discrete_line_factor",
    value: 3.162,
    unit: "amplitude ratio (10 dB)",
    meaning: "when discrete lines are removed, a line at least 10 dB over the median of the lines around it is brought down to that median (shaft-synchronous lines within max(2 lines, 0.02 %) of a 1x harmonic decide whether to remove)",
    source: "physics (shaft-locked tones are single lines in a whole-record spectrum; slipping impacts are not); checked on sim (gear mesh) and CWRU",
};

/// Limit of the squared envelope before its spectrum, in medians.
pub const ENVELOPE_CAP_MEDIANS: Rule = Rule {
    id: "envelope_cap_medians",
    value: 8.0,
    unit: "medians of the squared envelope",
    meaning: "the squared envelope is limited to this many medians before its spectrum: Gaussian noise exceeds it 0.4 % of the time, so noise is untouched, while isolated knocks can no longer flood the spectrum",
    source: "physics (exponential law of a Gaussian squared envelope: P = 2^-8); checked on sim (knocks) and CWRU",
};

/// Share of samples at the record's extreme value that marks clipping.
pub const CLIPPED_FRACTION: Rule = Rule {
    id: "clipped_fraction",
    value: 1e-3,
    unit: "share of samples",
    meaning: "a recording with at least this share (and at least 8) of its samples at its largest absolute value is clipped and gets no location",
    source: "common practice, no source (a clipped sensor flattens its peaks at the rail); checked on CWRU (no record flagged) and a unit test",
};

/// Other candidate bands that must show the same family.
pub const CORROBORATING_BANDS: Rule = Rule {
    id: "corroborating_bands",
    value: 1.0,
    unit: "candidate bands",
    meaning: "a named location must also be the strongest present family in at least this many other candidate bands, else \"unclear\"",
    source: "physics (an impact excites a broad resonance region, so its family shows in overlapping and neighbouring bands); checked on sim (no correct call lost) and CWRU (turns the 750-1500 Hz outer-race calls on ball records 185/186 into unclear)",
};

/// Share of the other present bands that must agree with the chosen family.
pub const CORROBORATING_SHARE: Rule = Rule {
    id: "corroborating_share",
    value: 0.85,
    unit: "share of the other candidate bands in which a family is present",
    meaning: "a named location must be the strongest family in at least this share of the other candidate bands where any family reaches the presence level, else \"unclear\" with both candidates named",
    source: "physics (one defect's impacts excite a broad resonance region, so a real family leads in nearly every band that shows anything; bands that name different families mean the envelope evidence is mixed); checked on sim (every right call at stages 2-3 has share 1.0, none lost) and CWRU 12 kHz DE (right calls 0.93-1.00; the wrong races on ball records 118, 119, 222-225 and outer-race records 198, 200 at 0.07-0.79 become unclear; 197, right at 0.14, becomes unclear too)",
};

/// Relative gap under which the outer-race and 2xBSF combs read the same lines.
pub const COMB_OVERLAP: Rule = Rule {
    id: "comb_overlap",
    value: 0.04,
    unit: "relative gap of BPFO and 2xBSF",
    meaning: "when BPFO and 2xBSF lie this close (each comb's slip search reaches 2 % either side, so both combs then land on the same lines), their scores cannot tell outer race from rolling element: the lines count for both in the band search, and, unless one comb beats the other by the margin, the call is rolling element when FTF modulation is there (the FTF line at least 12 dB over its floor: a damaged element carried through the load zone at cage speed), outer race when there is no FTF line at all (under the 10 dB line level: a defect fixed in the load zone is not modulated at cage speed), and \"unclear\" in between",
    source: "physics (kinematics: for roller bearings with element/pitch diameter near 0.16, e.g. 14 rollers of 15 mm on a 92 mm pitch, BPFO and 2xBSF differ by under 2 %); checked on the demo plant (rolling-element fault on such a bearing), sim and CWRU (not triggered there: 2xBSF/BPFO = 1.31)",
};

/// Sidebands that decide between the inner race and the rolling elements on shared lines.
pub const INNER_ELEMENT_SIDEBANDS: Rule = Rule {
    id: "inner_element_sidebands",
    value: 1.0,
    unit: "sideband lines at 10 dB",
    meaning: "when the BPFI and 2xBSF combs share lines (rates within the comb overlap of each other or of twice each other) and neither family beats the other by the margin, the one showing at least this many of its own sidebands (±1x for the inner race, ±FTF for a rolling element) while the other shows none is named (confidence at most 0.8); the two count as one family in the band search",
    source: "physics (kinematics: BPFI can fall on 2xBSF or on its 2nd harmonic for some geometries, and then the lines fit both; the modulation differs: an inner-race defect turns with the shaft through the load zone, a damaged element is carried round at cage speed); checked on sim (readings 77, inner race on BPFI 1 % from 2xBSF, and 118, rolling element with BPFI on 2x(2xBSF), were unclear and are now right; no call lost) and CWRU (not triggered: BPFI/2xBSF = 1.15 there)",
};

/// The whole table.
pub const LOCATION_RULES: [Rule; 14] = [
    PRESENT_DB,
    PRESENT_HARMONICS,
    MARGIN_DB,
    CORROBORATING_BANDS,
    CORROBORATING_SHARE,
    COMB_OVERLAP,
    INNER_ELEMENT_SIDEBANDS,
    CAGE_HARMONICS,
    CAGE_NOTCH_DB,
    BALL_TRAIN_DB,
    TONAL_FRACTION,
    LINE_FACTOR,
    ENVELOPE_CAP_MEDIANS,
    CLIPPED_FRACTION,
];
