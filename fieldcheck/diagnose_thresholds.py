"""Thresholds and confidence scoring of the mismatch diagnosis.

Every threshold the signatures of :mod:`fieldcheck.diagnose_signatures` apply
(and the few that :mod:`fieldcheck.diagnose_observe` and the ranking in
:mod:`fieldcheck.diagnose` share with them) is a named constant here with its
origin, next to the map from a signature's margin to its confidence.

Confidence scoring
------------------
Each signature reduces its evidence to a *margin* ``z``: how far the evidence
is past its threshold, in units of a stated scale (for ratios, in octaves or
in log steps of a stated factor).  ``z = 0`` is exactly at the threshold and
gives a confidence of 0.5; ``z = +1`` gives 0.9 and ``z = -1`` gives 0.1::

    confidence = 1 / (1 + exp(-ln(9) z))

Where two pieces of evidence must both hold, ``z`` is the smaller of the two
margins; where one piece of evidence corroborates another (for example the
ripple period matching the cable length), ``z`` grows by a stated bonus.  The
logistic is a presentation choice (common practice, no source): it keeps the
ranking equal to the ranking of margins and makes 50 % mean "at threshold".
"""

import math

import numpy as np

#: z = +1 maps to 0.9 confidence (see module docstring).
LOGISTIC_GAIN = math.log(9.0)

# ---- thresholds (common practice, no source, unless stated) ------------------
#: Resonance shift from the as-built design beyond which it is reported (2 %:
#: about what careless cutting, supports and end hardware do to a VHF dipole).
SHIFT_THRESHOLD = 0.02
#: Scale of the shift margin: each further 2 % is one unit of z.
SHIFT_SCALE = 0.02
#: Terminal resistance ratio (measured / expected) beyond which R is "far from expected".
R_RATIO_THRESHOLD = 1.5
#: A ratio within this factor of 4 or 1/4 is read as a balun ratio error (4:1 balun
#: assumed but absent, or present but not declared).
BALUN_RATIO_TOLERANCE = 1.3
#: A short at the feed looks like a small inductor: reactance positive at
#: SHORT_X_POSITIVE_FRACTION of the points, median X / omega below SHORT_L_MAX_H
#: and median resistance below SHORT_R_FRACTION z0.  60 nH: a short seen
#: through up to about 20 cm (air-equivalent) of 50..65 ohm line, L = Z0 l / v
#: (shorted line Z_in = j Z0 tan(beta l) for small beta l, Pozar, Microwave
#: Engineering, 4th ed., section 2.3): the balun's own line and adapters (up
#: to about 10 cm) plus what a 1 % velocity-factor error leaves of a few metres
#: of removed cable.
SHORT_X_POSITIVE_FRACTION = 0.9
SHORT_L_MAX_H = 60e-9
SHORT_R_FRACTION = 0.1
#: A reactance zero whose resistance exceeds this multiple of the expected one is
#: not the antenna's half-wave resonance (beyond a 4:1 balun error with its tolerance).
PLAUSIBLE_R_FACTOR = 6.0
#: Band around the as-built design resonance where its X = 0 must appear
#: (frequency ratios): a length error of up to about 25 % still resonates
#: inside it.
OPEN_BAND = (0.75, 1.33)
#: The sweep must cover at least this fraction of OPEN_BAND (in log frequency)
#: before the absence of a resonance there counts as evidence.
OPEN_MIN_COVERAGE = 0.5
#: Closest approach of the reactance to zero within OPEN_BAND, in units of z0,
#: at which "capacitive throughout" is at threshold (z = 0).  The feed gap,
#: balun and connector capacitance (a few pF: -j200..-j500 ohm at VHF) in
#: shunt with a healthy half-wave dipole can keep its X a few to about
#: 20 ohm below zero across its resonance, so no X = 0 crossing alone is not
#: enough; a broken arm leaves a short stub in series, tens to hundreds of
#: ohm capacitive.  Each halving / doubling is one unit of z.
OPEN_X_FRACTION = 0.4
#: Margin given to "no resonance where the design has one" on its own, when
#: the model fit cannot find a resonance there either (FitError, inadequate
#: fit, or a fitted resonance outside OPEN_BAND): at threshold, i.e. the open
#: element is then never ranked below "no fault found".
OPEN_Z_NO_RESONANCE = 0.0
#: A series resonance within this frequency-ratio range of twice the design
#: resonance is the half-length signature of a broken element.
OPEN_DOUBLE_RANGE = (1.6, 2.5)
#: Smallest ripple amplitude reported, |Gamma| (-32 dB: a feed cable whose Z0 is
#: 1 ohm off already leaves about -40 dB of ripple).
RIPPLE_MIN_GAMMA = 0.025
#: Velocity factor of a wave on the outside of a jacketed coaxial shield (from
#: memory: roughly 0.8 to 1.0 depending on the jacket); the middle is used for lengths.
OUTSIDE_VF_RANGE = (0.8, 1.0)
#: Ripple must stand this many noise standard deviations above the noise floor.
RIPPLE_MIN_SNR = 6.0
#: Ripple period within this relative tolerance of c VF / (2 L) "matches" the cable.
RIPPLE_PERIOD_RTOL = 0.2
#: Feed hardware left in front of the terminals on any bench: a balun's own
#: line of a few cm (2..6 cm at VF 0.7 is 3..9 cm air-equivalent) plus
#: adapters, about 10 cm of free space one way.  A residual delay is judged
#: by how far it exceeds this floor, never counting the floor as a fault.
REFPLANE_HARDWARE_M = 0.10
#: A reference-plane fault is a cable left in or removed with the wrong
#: length: tens of cm.  A residual delay of this free-space length is at
#: threshold (z = 0); each doubling is one unit of z.
REFPLANE_MIN_M = 0.25
#: The excess over REFPLANE_HARDWARE_M must also exceed this many standard
#: uncertainties of the fitted delay (z = 0 there, one unit per 2 sigma).
REFPLANE_SIGMAS = 3.0
#: A measured |S11| above 1 by more than this (plus 3 noise sigma) is a calibration fault.
CAL_GAMMA_MARGIN = 0.02
#: A jump between adjacent points this many robust sigmas above the trace's own
#: point-to-point change, and at least CAL_STEP_MIN_GAMMA, is a discontinuity.
CAL_STEP_SIGMAS = 10.0
CAL_STEP_MIN_GAMMA = 0.02
#: Trace noise (per component of Gamma) reported as too little signal: the larger
#: of an absolute floor (-40 dB; a healthy analyser shows -50..-60 dB) and a
#: fraction of the trace's own variation.
LOW_SIGNAL_SIGMA = 0.01
LOW_SIGNAL_FRACTION = 0.05
#: A trace winding more turns than this about the Smith chart centre has a line
#: left in front of it: a single series resonance winds at most one turn.
REFPLANE_MAX_TURNS = 2.5
#: A reflection in the cable at least this large (|Gamma|, -20 dB) is a fault
#: when it lies before the far end (good connectors are below -30 dB).
CABLE_FAULT_MIN_GAMMA = 0.1
#: "Well before the end": by more than this fraction of the cable length (or half
#: the range resolution, whichever is larger).
CABLE_END_FRACTION = 0.05
#: Causes below this confidence are not listed.
REPORT_MIN_CONFIDENCE = 0.15
#: Below this confidence for every fault, "no fault found" is offered.
NO_FAULT_BELOW = 0.5
#: Largest margin of "no fault found" when a description is given, its design
#: resonance lies in the sweep, and no resonance (fitted or read off the trace)
#: lies within OPEN_BAND of it (10 %: something is wrong even if no signature
#: can say what).
NO_FAULT_Z_NO_RESONANCE = -1.0


def confidence(z: float) -> float:
    """Logistic confidence of a margin ``z`` (dimensionless): 0.5 at 0, 0.9 at +1."""
    z = float(np.clip(z, -30.0, 30.0))
    return 1.0 / (1.0 + math.exp(-LOGISTIC_GAIN * z))


def log_margin(value: float, threshold: float, factor: float = 2.0) -> float:
    """Margin of a ratio-like quantity: log base ``factor`` of value / threshold."""
    if value <= 0 or threshold <= 0:
        return -30.0
    return math.log(value / threshold) / math.log(factor)
