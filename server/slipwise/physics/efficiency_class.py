"""IEC 60034-30-1 efficiency classes (IE1 to IE4) of line-operated cage induction motors.

(Over 400 lines on purpose: most of it is the standard's tables, kept in one
place beside the rules that read them, so a reviewer checks a cell where it is used.)

The standard gives, for 2, 4, 6 and 8 poles and rated outputs from 0.12 kW to
1000 kW, the minimum nominal full-load efficiency of each class, in one table
for 50 Hz and one for 60 Hz motors. This module carries those tables and the
standard's rules for ratings between two table rows:

* 50 Hz: the cubic in ``x = log10(P_N / 1 kW)``,
  ``eta_N = A x^3 + B x^2 + C x + D``, with one set of coefficients for
  0.12 kW to 0.55 kW and one for 0.75 kW to 200 kW, rounded to 0.1 % as the
  tabulated values are (the coefficients reproduce every tabulated value to
  within 0.05 %, see the tests). From 200 kW to 1000 kW the table is flat.
* 60 Hz: a rating at or above the midpoint between two consecutive table
  ratings takes the higher of their two efficiencies, one below the midpoint
  the lower. From 375 kW to 1000 kW the table is flat.

Where no rule is established here (a 50 Hz rating between 0.55 kW and 0.75 kW,
which neither coefficient range covers; IE1 at 50 Hz below 0.75 kW and for
8 poles, whose coefficients could neither be read nor recalled) this module
interpolates linearly in ``log10(P_N)`` between the two neighbouring table
rows and rounds to 0.1 %. That is its own choice, not the standard's: taking
the next higher rating instead would put IE1 above IE2 just above some rows,
where IE2 follows the smooth cubic.

Where the tables come from
--------------------------
The standard itself is a paid document and was not read. Each table says below
where its values were read, or that they are ``from memory``:

* 50 Hz, IE2 to IE4, all poles, 0.12 kW to 1000 kW: the rows are recalled
  (from memory) and checked against the interpolation coefficients of IEC
  60034-30-1 as reproduced in Regulation (EU) 2019/1781 Annex I, read in its
  UK copy, The Ecodesign for Energy-Related Products and Energy Information
  Regulations 2021 (SI 2021/745), Schedule 16, Tables 27 and 28. The
  coefficients reproduce every row; the one recalled value they contradicted
  (IE3, 8 poles, 0.55 kW: recalled 74.0) is carried at the coefficients'
  73.0. That the rows from 200 kW to 1000 kW repeat the 200 kW row is from
  memory. Rows 0.75 kW to 7.5 kW of IE1 to IE3 (2, 4 and 6 poles) and part of
  the 11 kW row also agree with the IEC 60034-30:2008 table reproduced in
  Siemens' note "General information regarding efficiency in accordance
  with International Efficiency".
* 50 Hz, IE1: from memory. Its 0.75 kW to 200 kW coefficients for 2, 4 and 6
  poles (also from memory, from IEC 60034-30:2008) reproduce the rows; the
  8-pole rows and the 0.12 kW to 0.55 kW rows are not cross-checked.
* 60 Hz, IE3, 0.75 kW to 375 kW: identical to NEMA Premium. Read in 10 CFR
  431.25 Table 5 (enclosed motors, NEMA Design A/B, IEC Design N), except
  6 poles above 261 kW and 8 poles above 186 kW, which that table does not
  list: those are from memory (the last listed value continued).
* 60 Hz, IE2, 0.75 kW to 375 kW: identical to the EPAct / "NEMA Energy
  Efficient" levels. Read in 10 CFR 431.25 Table 7 (fire pump motors,
  enclosed, which keeps those levels to 500 hp); 6 poles above 261 kW and
  8 poles above 186 kW read in the CSA C390 tables as reproduced in the
  ``fluids`` package (``fluids.pump``, ``nema_min_full_closed_6p/8p``).
* 60 Hz, 0.12 kW to 0.55 kW, IE3: 0.18 kW to 0.55 kW for 2, 4 and 6 poles
  read in 10 CFR 431.446 (polyphase small electric motors); that IEC adopted
  them for IE3, the 0.12 kW row and the 8-pole column are from memory.
* 60 Hz, IE2 below 0.75 kW: from memory. Low confidence.
* 60 Hz, IE1 for 2, 4 and 6 poles from 0.75 kW, and all of IE4: **derived**,
  not read. The standard's 60 Hz IE1 and IE4 columns could not be read, and
  the values once recalled for them were inconsistent (IE4 equal to IE3 at
  4 poles 0.75 kW, IE1 above IE2 at 2 poles 0.75 kW, IE1 6-pole losses 42 %
  above IE2's). Each cell is derived from the 60 Hz table beside it and the
  50 Hz loss ratio at the same rated output and poles (loss = 100 - eta [%]):
  ``loss_IE4,60 = loss_IE3,60 * loss_IE4,50 / loss_IE3,50`` and
  ``loss_IE1,60 = loss_IE2,60 * loss_IE1,50 / loss_IE2,50``, rounded to
  0.1 %, then made non-decreasing with rated output (a running maximum down
  the rows: the standard's columns never fall). The 50 Hz values at 60 Hz
  ratings that are not 50 Hz rows (3.7, 150, 185 ... 375 kW) come from the
  50 Hz interpolation rule. :func:`_derive_60hz_from_50hz_ratio` recomputes
  the derivation and a test checks the tables equal it. Verify against the
  standard before relying on a 60 Hz IE1 or IE4 verdict.
* 60 Hz, IE1 below 0.75 kW and IE1 for 8 poles: not carried (neither read nor
  recalled). :func:`nominal_efficiency_pct` returns NaN there and
  :func:`efficiency_class` returns ``""`` for an efficiency below IE2 there.

With these, losses fall strictly from IE1 to IE4 at every 60 Hz table row and
pole count (where IE1 is carried), as they do at 50 Hz.

References
----------
.. [1] IEC 60034-30-1:2014, Rotating electrical machines - Part 30-1:
   Efficiency classes of line operated AC motors (IE code).
.. [2] Commission Regulation (EU) 2019/1781, Annex I, and its UK copy
   SI 2021/745 Schedule 16 (interpolation coefficients, Tables 27 and 28;
   60 Hz midpoint rule, paragraph 5).
.. [3] 10 CFR 431.25, Tables 5 and 7; 10 CFR 431.446 (US DOE).
"""

from __future__ import annotations

import numpy as np

#: The classes this module knows, lowest first.
IE_CLASSES: tuple[str, ...] = ("IE1", "IE2", "IE3", "IE4")
#: Label for an in-scope motor that does not reach IE1.
BELOW_IE1 = "below IE1"
#: Pole counts the standard covers.
POLE_COUNTS: tuple[int, ...] = (2, 4, 6, 8)
#: Rated output range the standard covers [kW], inclusive.
RATED_POWER_MIN_KW = 0.12
RATED_POWER_MAX_KW = 1000.0
#: Rated frequencies with a table [Hz].
RATED_FREQUENCIES_HZ: tuple[float, ...] = (50.0, 60.0)

# Relative tolerance for "this rating is a table rating" and for range ends.
_REL_TOL = 1e-9
# An efficiency this close below a limit still meets it [%] (float noise only).
_MEET_TOL_PCT = 1e-9

# --- 50 Hz -------------------------------------------------------------------
# Rows [kW]; the standard lists further rows from 200 kW to 1000 kW with the
# 200 kW values, so the table is held flat above its last row.
_KW_50HZ = np.array([
    0.12, 0.18, 0.20, 0.25, 0.37, 0.40, 0.55, 0.75, 1.1, 1.5, 2.2, 3.0, 4.0, 5.5, 7.5,
    11.0, 15.0, 18.5, 22.0, 30.0, 37.0, 45.0, 55.0, 75.0, 90.0, 110.0, 132.0, 160.0, 200.0,
])

# Columns: 2, 4, 6, 8 poles [%]. Provenance: see the module docstring.
_IE1_50HZ = (
    (45.0, 50.0, 38.3, 31.0), (52.8, 57.0, 45.5, 38.0), (54.6, 58.5, 47.6, 39.7),
    (58.2, 61.5, 52.1, 43.4), (63.9, 66.0, 59.7, 49.7), (64.9, 66.8, 61.1, 50.9),
    (69.0, 70.0, 65.8, 56.1), (72.1, 72.1, 70.0, 61.2), (75.0, 75.0, 72.9, 66.5),
    (77.2, 77.2, 75.2, 70.2), (79.7, 79.7, 77.7, 74.2), (81.5, 81.5, 79.7, 77.0),
    (83.1, 83.1, 81.4, 79.2), (84.7, 84.7, 83.1, 81.4), (86.0, 86.0, 84.7, 83.1),
    (87.6, 87.6, 86.4, 85.0), (88.7, 88.7, 87.7, 86.2), (89.3, 89.3, 88.6, 86.9),
    (89.9, 89.9, 89.2, 87.4), (90.7, 90.7, 90.2, 88.3), (91.2, 91.2, 90.8, 88.8),
    (91.7, 91.7, 91.4, 89.2), (92.1, 92.1, 91.9, 89.7), (92.7, 92.7, 92.6, 90.3),
    (93.0, 93.0, 92.9, 90.7), (93.3, 93.3, 93.3, 91.1), (93.5, 93.5, 93.5, 91.5),
    (93.8, 93.8, 93.8, 91.9), (94.0, 94.0, 94.0, 92.5),
)
_IE2_50HZ = (
    (53.6, 59.1, 50.6, 39.8), (60.4, 64.7, 56.6, 45.9), (61.9, 65.9, 58.2, 47.4),
    (64.8, 68.5, 61.6, 50.6), (69.5, 72.7, 67.6, 56.1), (70.4, 73.5, 68.8, 57.2),
    (74.1, 77.1, 73.1, 61.7), (77.4, 79.6, 75.9, 66.2), (79.6, 81.4, 78.1, 70.8),
    (81.3, 82.8, 79.8, 74.1), (83.2, 84.3, 81.8, 77.6), (84.6, 85.5, 83.3, 80.0),
    (85.8, 86.6, 84.6, 81.9), (87.0, 87.7, 86.0, 83.8), (88.1, 88.7, 87.2, 85.3),
    (89.4, 89.8, 88.7, 86.9), (90.3, 90.6, 89.7, 88.0), (90.9, 91.2, 90.4, 88.6),
    (91.3, 91.6, 90.9, 89.1), (92.0, 92.3, 91.7, 89.8), (92.5, 92.7, 92.2, 90.3),
    (92.9, 93.1, 92.7, 90.7), (93.2, 93.5, 93.1, 91.0), (93.8, 94.0, 93.7, 91.6),
    (94.1, 94.2, 94.0, 91.9), (94.3, 94.5, 94.3, 92.3), (94.6, 94.7, 94.6, 92.6),
    (94.8, 94.9, 94.8, 93.0), (95.0, 95.1, 95.0, 93.5),
)
_IE3_50HZ = (
    (60.8, 64.8, 57.7, 50.7), (65.9, 69.9, 63.9, 58.7), (67.2, 71.1, 65.4, 60.6),
    (69.7, 73.5, 68.6, 64.1), (73.8, 77.3, 73.5, 69.3), (74.6, 78.0, 74.4, 70.1),
    (77.8, 80.8, 77.2, 73.0), (80.7, 82.5, 78.9, 75.0), (82.7, 84.1, 81.0, 77.7),
    (84.2, 85.3, 82.5, 79.7), (85.9, 86.7, 84.3, 81.9), (87.1, 87.7, 85.6, 83.5),
    (88.1, 88.6, 86.8, 84.8), (89.2, 89.6, 88.0, 86.2), (90.1, 90.4, 89.1, 87.3),
    (91.2, 91.4, 90.3, 88.6), (91.9, 92.1, 91.2, 89.6), (92.4, 92.6, 91.7, 90.1),
    (92.7, 93.0, 92.2, 90.6), (93.3, 93.6, 92.9, 91.3), (93.7, 93.9, 93.3, 91.8),
    (94.0, 94.2, 93.7, 92.2), (94.3, 94.6, 94.1, 92.5), (94.7, 95.0, 94.6, 93.1),
    (95.0, 95.2, 94.9, 93.4), (95.2, 95.4, 95.1, 93.7), (95.4, 95.6, 95.4, 94.0),
    (95.6, 95.8, 95.6, 94.3), (95.8, 96.0, 95.8, 94.6),
)
_IE4_50HZ = (
    (66.5, 69.8, 64.9, 62.3), (70.8, 74.7, 70.1, 67.2), (71.9, 75.8, 71.4, 68.4),
    (74.3, 77.9, 74.1, 70.8), (78.1, 81.1, 78.0, 74.3), (78.9, 81.7, 78.7, 74.9),
    (81.5, 83.9, 80.9, 77.0), (83.5, 85.7, 82.7, 78.4), (85.2, 87.2, 84.5, 80.8),
    (86.5, 88.2, 85.9, 82.6), (88.0, 89.5, 87.4, 84.5), (89.1, 90.4, 88.6, 85.9),
    (90.0, 91.1, 89.5, 87.1), (90.9, 91.9, 90.5, 88.3), (91.7, 92.6, 91.3, 89.3),
    (92.6, 93.3, 92.3, 90.4), (93.3, 93.9, 92.9, 91.2), (93.7, 94.2, 93.4, 91.7),
    (94.0, 94.5, 93.7, 92.1), (94.5, 94.9, 94.2, 92.7), (94.8, 95.2, 94.5, 93.1),
    (95.0, 95.4, 94.8, 93.4), (95.3, 95.7, 95.1, 93.7), (95.6, 96.0, 95.4, 94.2),
    (95.8, 96.1, 95.6, 94.4), (96.0, 96.3, 95.8, 94.7), (96.2, 96.4, 96.0, 94.9),
    (96.3, 96.6, 96.2, 95.1), (96.5, 96.7, 96.3, 95.4),
)

# Interpolation coefficients, [class][A, B, C, D][2, 4, 6, 8 poles]. IE2 to IE4
# as read in SI 2021/745 Schedule 16 Tables 27 (0.12-0.55 kW) and 28
# (0.75-200 kW); IE1 0.75-200 kW for 2, 4, 6 poles from memory (IEC
# 60034-30:2008); NaN where not carried (log-linear between rows is used).
_NAN4 = (np.nan,) * 4
_COEF_50HZ_SMALL = np.array([
    (_NAN4, _NAN4, _NAN4, _NAN4),
    ((22.4864, 17.2751, -15.9218, 6.4855), (27.7603, 23.978, -30.258, 9.4748),
     (37.8091, 35.5822, 16.6861, 36.852), (82.458, 84.9935, 79.1838, 70.762)),
    ((6.8532, 7.6356, -17.361, -0.5896), (6.2006, 4.8236, -44.538, -25.526),
     (25.1317, 21.0903, -3.0554, 4.2884), (84.0392, 86.0998, 79.1318, 75.831)),
    ((-8.8538, 8.432, -13.0355, -4.9735), (-20.3352, 2.6888, -36.9497, -21.453),
     (8.9002, 14.6236, -4.3621, 2.6653), (85.0641, 87.6153, 82.0009, 79.055)),
])
_COEF_50HZ_LARGE = np.array([
    ((0.5234, 0.5234, 0.0786, np.nan), (-5.0499, -5.0499, -3.5838, np.nan),
     (17.4180, 17.4180, 17.2918, np.nan), (74.3171, 74.3171, 72.2383, np.nan)),
    ((0.2972, 0.0278, 0.0148, 2.1311), (-3.3454, -1.9247, -2.4978, -12.029),
     (13.0651, 10.4395, 13.247, 26.719), (79.077, 80.9761, 77.5603, 69.735)),
    ((0.3569, 0.0773, 0.1252, 0.7189), (-3.3076, -1.8951, -2.613, -5.1678),
     (11.6108, 9.2984, 11.9963, 15.705), (82.2503, 83.7025, 80.4769, 77.074)),
    ((0.34, 0.2412, 0.3598, 0.6556), (-3.0479, -2.3608, -3.2107, -4.7229),
     (10.293, 8.446, 10.7933, 13.977), (84.8208, 86.8321, 84.107, 80.247)),
])
_SMALL_RANGE_MAX_KW = 0.55
_LARGE_RANGE_MIN_KW = 0.75
_FORMULA_MAX_KW = 200.0

# --- 60 Hz -------------------------------------------------------------------
# Rows [kW] (the kW equivalents of the NEMA horsepower ratings as the standard
# prints them, from memory); flat from 375 kW to 1000 kW.
_KW_60HZ = np.array([
    0.12, 0.18, 0.25, 0.37, 0.55, 0.75, 1.1, 1.5, 2.2, 3.7, 5.5, 7.5, 11.0, 15.0, 18.5, 22.0,
    30.0, 37.0, 45.0, 55.0, 75.0, 90.0, 110.0, 150.0, 185.0, 220.0, 250.0, 300.0, 330.0, 375.0,
])
_N = np.nan
# IE1: derived (see _derive_60hz_from_50hz_ratio); NaN where not carried.
_IE1_60HZ = (
    (_N, _N, _N, _N), (_N, _N, _N, _N), (_N, _N, _N, _N), (_N, _N, _N, _N), (_N, _N, _N, _N),
    (69.8, 76.1, 75.1, _N), (78.6, 78.5, 82.1, _N), (80.5, 78.8, 83.4, _N), (82.5, 83.8, 84.7, _N),
    (85.1, 84.2, 84.8, _N), (86.5, 86.9, 87.3, _N), (87.6, 87.0, 87.4, _N), (88.5, 89.1, 88.2, _N),
    (88.6, 89.2, 88.3, _N), (89.4, 90.8, 90.1, _N), (89.6, 90.9, 90.1, _N), (90.4, 91.5, 91.7, _N),
    (91.1, 91.6, 91.7, _N), (91.8, 92.3, 92.5, _N), (91.9, 92.8, 92.5, _N), (92.5, 93.3, 93.1, _N),
    (93.5, 93.4, 93.1, _N), (93.5, 93.9, 94.1, _N), (94.1, 93.9, 94.1, _N), (94.4, 93.9, 94.1, _N),
    (94.5, 94.4, 94.1, _N), (94.5, 94.4, 94.1, _N), (94.5, 94.4, 94.1, _N), (94.5, 94.4, 94.1, _N),
    (94.5, 94.9, 94.1, _N),
)
_IE2_60HZ = (
    (59.5, 64.0, 50.5, 40.0), (64.0, 68.0, 55.0, 46.0), (68.0, 70.0, 59.5, 52.0),
    (72.0, 72.0, 64.0, 58.0), (74.0, 75.5, 68.0, 62.0),
    (75.5, 82.5, 80.0, 74.0), (82.5, 84.0, 85.5, 77.0), (84.0, 84.0, 86.5, 82.5),
    (85.5, 87.5, 87.5, 84.0), (87.5, 87.5, 87.5, 85.5), (88.5, 89.5, 89.5, 85.5),
    (89.5, 89.5, 89.5, 88.5), (90.2, 91.0, 90.2, 88.5), (90.2, 91.0, 90.2, 89.5),
    (91.0, 92.4, 91.7, 89.5), (91.0, 92.4, 91.7, 91.0), (91.7, 93.0, 93.0, 91.0),
    (92.4, 93.0, 93.0, 91.7), (93.0, 93.6, 93.6, 91.7), (93.0, 94.1, 93.6, 93.0),
    (93.6, 94.5, 94.1, 93.0), (94.5, 94.5, 94.1, 93.6), (94.5, 95.0, 95.0, 93.6),
    (95.0, 95.0, 95.0, 94.1), (95.4, 95.0, 95.0, 94.5), (95.4, 95.4, 95.0, 94.5),
    (95.4, 95.4, 95.0, 94.5), (95.4, 95.4, 95.0, 94.5), (95.4, 95.4, 95.0, 94.5),
    (95.4, 95.8, 95.0, 94.5),
)
_IE3_60HZ = (
    (62.0, 66.0, 64.0, 59.5), (65.6, 69.5, 67.5, 64.0), (69.5, 73.4, 71.4, 68.0),
    (73.4, 78.2, 75.3, 72.0), (76.8, 81.1, 81.7, 74.0),
    (77.0, 85.5, 82.5, 75.5), (84.0, 86.5, 87.5, 78.5), (85.5, 86.5, 88.5, 84.0),
    (86.5, 89.5, 89.5, 85.5), (88.5, 89.5, 89.5, 86.5), (89.5, 91.7, 91.0, 86.5),
    (90.2, 91.7, 91.0, 89.5), (91.0, 92.4, 91.7, 89.5), (91.0, 93.0, 91.7, 90.2),
    (91.7, 93.6, 93.0, 90.2), (91.7, 93.6, 93.0, 91.7), (92.4, 94.1, 94.1, 91.7),
    (93.0, 94.5, 94.1, 92.4), (93.6, 95.0, 94.5, 92.4), (93.6, 95.4, 94.5, 93.6),
    (94.1, 95.4, 95.0, 93.6), (95.0, 95.4, 95.0, 94.1), (95.0, 95.8, 95.8, 94.1),
    (95.4, 96.2, 95.8, 94.5), (95.8, 96.2, 95.8, 95.0), (95.8, 96.2, 95.8, 95.0),
    (95.8, 96.2, 95.8, 95.0), (95.8, 96.2, 95.8, 95.0), (95.8, 96.2, 95.8, 95.0),
    (95.8, 96.2, 95.8, 95.0),
)
# IE4: derived (see _derive_60hz_from_50hz_ratio).
_IE4_60HZ = (
    (67.5, 70.8, 70.1, 69.0), (70.5, 74.4, 73.1, 71.4), (74.1, 77.8, 76.4, 74.0),
    (77.8, 81.8, 79.5, 76.6), (80.7, 84.2, 84.7, 77.9), (80.7, 88.2, 85.7, 78.8),
    (86.3, 89.1, 89.8, 81.5), (87.6, 89.2, 90.7, 86.3), (88.5, 91.7, 91.6, 87.6),
    (90.3, 91.8, 91.7, 88.5), (91.2, 93.5, 92.9, 88.6), (91.8, 93.6, 92.9, 91.2),
    (92.4, 94.1, 93.4, 91.2), (92.6, 94.6, 93.4, 91.7), (93.1, 95.0, 94.4, 91.8),
    (93.2, 95.0, 94.4, 93.0), (93.8, 95.3, 95.2, 93.0), (94.2, 95.7, 95.2, 93.6),
    (94.7, 96.0, 95.5, 93.6), (94.7, 96.3, 95.5, 94.6), (95.1, 96.3, 95.7, 94.6),
    (95.8, 96.3, 95.7, 95.0), (95.8, 96.6, 96.4, 95.0), (96.2, 96.8, 96.4, 95.4),
    (96.6, 96.9, 96.4, 95.7), (96.6, 96.9, 96.4, 95.7), (96.6, 96.9, 96.4, 95.7),
    (96.6, 96.9, 96.4, 95.7), (96.6, 96.9, 96.4, 95.7), (96.6, 96.9, 96.4, 95.7),
)

# [class, row, pole] arrays.
_LIMITS_50HZ = np.array([_IE1_50HZ, _IE2_50HZ, _IE3_50HZ, _IE4_50HZ], dtype=float)
_LIMITS_60HZ = np.array([_IE1_60HZ, _IE2_60HZ, _IE3_60HZ, _IE4_60HZ], dtype=float)
_LIMITS_50HZ.setflags(write=False)
_LIMITS_60HZ.setflags(write=False)

_CLASS_INDEX = {name: k for k, name in enumerate(IE_CLASSES)}
_CLASS_LABELS = np.array(IE_CLASSES, dtype="<U9")


# --- typical efficiency fallback -------------------------------------------
#: Range of motors :func:`typical_efficiency_pct` answers for (inclusive).
TYPICAL_POWER_RANGE_KW = (0.06, 2000.0)
TYPICAL_POLES_RANGE = (2, 24)
TYPICAL_FREQUENCY_RANGE_HZ = (16.0, 120.0)
#: Extra losses per pole pair beyond 8 poles, as a fraction of the 8-pole
#: IE2 losses (assumption of this module: more poles, more magnetising current
#: and copper for the same output).
EXTRA_LOSS_PER_POLE_PAIR = 0.10
#: Exponent of the growth of losses below 0.12 kW, ``(0.12 kW / P)**n``
#: (assumption of this module: small motors lose a larger share).
SMALL_MOTOR_LOSS_EXPONENT = 0.3
#: Bounds of a fallback value [%]: the nameplate field's own range.
TYPICAL_EFFICIENCY_BOUNDS_PCT = (40.0, 99.0)
# Rated frequencies up to this use the 50 Hz table in the fallback [Hz].
_FALLBACK_50HZ_UP_TO_HZ = 55.0


def _pole_column(poles):
    """Column 0-3 for 2/4/6/8 poles, -1 otherwise."""
    col = np.full(poles.shape, -1, dtype=np.intp)
    for k, n in enumerate(POLE_COUNTS):
        col[poles == n] = k
    return col


def _limits_50hz(p_kw, col):
    """All four class limits [%] at 50 Hz, shape (4, n); inputs in scope."""
    p = np.minimum(p_kw, _FORMULA_MAX_KW)
    row = np.searchsorted(_KW_50HZ, p * (1.0 - _REL_TOL), side="left")
    row = np.minimum(row, _KW_50HZ.size - 1)
    exact = np.abs(_KW_50HZ[row] - p) <= _REL_TOL * p
    out = _LIMITS_50HZ[:, row, col]                    # (4, n), a copy
    need = ~exact
    if not need.any():
        return out
    # Where no coefficients apply: linear in log10(P) between the two rows.
    lo = np.maximum(row - 1, 0)
    span = np.log(_KW_50HZ[row] / _KW_50HZ[lo])
    w = np.divide(np.log(p / _KW_50HZ[lo]), span, out=np.ones_like(p), where=span > 0.0)
    between = np.round(_LIMITS_50HZ[:, lo, col] * (1.0 - w) + _LIMITS_50HZ[:, row, col] * w, 1)
    out[:, need] = between[:, need]
    x = np.log10(p[need])
    c = col[need]
    small = p[need] <= _SMALL_RANGE_MAX_KW * (1.0 + _REL_TOL)
    large = p[need] >= _LARGE_RANGE_MIN_KW * (1.0 - _REL_TOL)
    for k in range(len(IE_CLASSES)):
        a_s, b_s, c_s, d_s = _COEF_50HZ_SMALL[k][:, c]
        a_l, b_l, c_l, d_l = _COEF_50HZ_LARGE[k][:, c]
        a = np.where(small, a_s, a_l)
        b = np.where(small, b_s, b_l)
        cc = np.where(small, c_s, c_l)
        d = np.where(small, d_s, d_l)
        eta = np.round(((a * x + b) * x + cc) * x + d, 1)
        usable = (small | large) & np.isfinite(eta)
        sub = out[k, need]
        sub[usable] = eta[usable]
        out[k, need] = sub
    return out


def _limits_60hz(p_kw, col):
    """All four class limits [%] at 60 Hz, shape (4, n); inputs in scope."""
    p = np.minimum(p_kw, _KW_60HZ[-1])
    hi = np.searchsorted(_KW_60HZ, p * (1.0 - _REL_TOL), side="left")
    hi = np.minimum(hi, _KW_60HZ.size - 1)
    lo = np.maximum(hi - 1, 0)
    exact = np.abs(_KW_60HZ[hi] - p) <= _REL_TOL * p
    v_hi = _LIMITS_60HZ[:, hi, col]
    v_lo = _LIMITS_60HZ[:, lo, col]
    midpoint = 0.5 * (_KW_60HZ[lo] + _KW_60HZ[hi])
    at_or_above = p >= midpoint * (1.0 - _REL_TOL)
    # np.maximum/np.minimum keep NaN: an unknown neighbour gives an unknown limit.
    between = np.where(at_or_above, np.maximum(v_lo, v_hi), np.minimum(v_lo, v_hi))
    return np.where(exact, v_hi, between)


def _all_limits_pct(rated_power_kw, poles, frequency_hz):
    """Limits of IE1..IE4 [%], shape (4,) + broadcast shape; NaN out of scope."""
    p, n, f = np.broadcast_arrays(np.asarray(rated_power_kw, dtype=float),
                                  np.asarray(poles, dtype=float),
                                  np.asarray(frequency_hz, dtype=float))
    shape = p.shape
    p, n, f = p.ravel(), n.ravel(), f.ravel()
    col = _pole_column(n)
    with np.errstate(invalid="ignore"):
        in_scope = ((col >= 0)
                    & (p >= RATED_POWER_MIN_KW * (1.0 - _REL_TOL))
                    & (p <= RATED_POWER_MAX_KW * (1.0 + _REL_TOL)))
        is_50 = np.abs(f - 50.0) <= 50.0 * _REL_TOL
        is_60 = np.abs(f - 60.0) <= 60.0 * _REL_TOL
    out = np.full((len(IE_CLASSES), p.size), np.nan)
    for mask, table in ((in_scope & is_50, _limits_50hz), (in_scope & is_60, _limits_60hz)):
        if mask.any():
            out[:, mask] = table(p[mask], col[mask])
    return out.reshape((len(IE_CLASSES),) + shape)


def _class_index(ie_class):
    names = np.asarray(ie_class)
    if names.dtype.kind not in "UO":
        raise ValueError(f"ie_class must be one of {', '.join(IE_CLASSES)}; got {ie_class!r}")
    flat = names.ravel()
    idx = np.empty(flat.shape, dtype=np.intp)
    for i, name in enumerate(flat):
        key = str(name).strip().upper()
        if key not in _CLASS_INDEX:
            raise ValueError(f"ie_class must be one of {', '.join(IE_CLASSES)}; got {name!r}")
        idx[i] = _CLASS_INDEX[key]
    return idx.reshape(names.shape)


def _derive_60hz_from_50hz_ratio(derived_class, base_class):
    """60 Hz limits of one class derived from a neighbouring class [%], (rows, poles).

    ``loss_derived,60 = loss_base,60 * loss_derived,50 / loss_base,50`` at each
    60 Hz table rating and pole count (loss = 100 - eta), rounded to 0.1 %,
    then a running maximum down the rows. Used by the tests to check the
    carried ``_IE1_60HZ`` / ``_IE4_60HZ`` tables; NaN where the 60 Hz base is.
    """
    k_d, k_b = _CLASS_INDEX[derived_class], _CLASS_INDEX[base_class]
    p = np.repeat(_KW_60HZ, len(POLE_COUNTS))
    n = np.tile(np.array(POLE_COUNTS, dtype=float), _KW_60HZ.size)
    limits_50 = _all_limits_pct(p, n, np.full(p.shape, 50.0)).reshape(len(IE_CLASSES), _KW_60HZ.size, -1)
    loss_60 = 100.0 - _LIMITS_60HZ[k_b]
    out = np.round(100.0 - loss_60 * (100.0 - limits_50[k_d]) / (100.0 - limits_50[k_b]), 1)
    return np.fmax.accumulate(out, axis=0)


def nominal_efficiency_pct(rated_power_kw, poles, frequency_hz, ie_class):
    """Minimum nominal full-load efficiency of an IE class, IEC 60034-30-1.

    Parameters
    ----------
    rated_power_kw : numeric
        Rated output [kW]; the standard covers 0.12 to 1000.
    poles : numeric
        Number of poles [-]; the standard covers 2, 4, 6 and 8.
    frequency_hz : numeric
        Rated frequency [Hz]; tables exist for 50 and 60 only.
    ie_class : str or array of str
        ``"IE1"``, ``"IE2"``, ``"IE3"`` or ``"IE4"``.

    Returns
    -------
    numeric
        Minimum nominal efficiency [%]. NaN where the standard does not apply
        (other pole counts, rated output outside 0.12-1000 kW, rated
        frequency other than 50 or 60 Hz, NaN input) and for the 60 Hz IE1
        cells this module does not carry (below 0.75 kW, and 8 poles).

    Raises
    ------
    ValueError
        If ``ie_class`` names no class.

    Notes
    -----
    Between table ratings: at 50 Hz the standard's cubic in
    ``log10(P_N / 1 kW)`` rounded to 0.1 %; at 60 Hz the midpoint rule (at or
    above the midpoint the higher of the two neighbours' efficiencies, below
    it the lower). Where no rule is carried, linear in ``log10(P_N)`` between
    the neighbouring rows, rounded to 0.1 % (this module's choice).
    Sources of each table: see the module docstring.

    References
    ----------
    .. [1] IEC 60034-30-1:2014, efficiency classes of line operated AC motors.
    .. [2] SI 2021/745 Schedule 16 (copy of Regulation (EU) 2019/1781 Annex I).

    Examples
    --------
    >>> float(nominal_efficiency_pct(11.0, 4, 50.0, "IE3"))
    91.4
    >>> nominal_efficiency_pct([7.5, 11.0], 4, 50.0, "IE2").tolist()
    [88.7, 89.8]
    """
    idx = _class_index(ie_class)
    p, n, f, idx = np.broadcast_arrays(np.asarray(rated_power_kw, dtype=float),
                                       np.asarray(poles, dtype=float),
                                       np.asarray(frequency_hz, dtype=float), idx)
    limits = _all_limits_pct(p, n, f)
    out = np.take_along_axis(limits, idx[np.newaxis], axis=0)[0]
    return out[()] if out.ndim == 0 else out


def efficiency_class(rated_power_kw, poles, frequency_hz, efficiency_pct):
    """IE class that a rated efficiency reaches under IEC 60034-30-1.

    Parameters
    ----------
    rated_power_kw : numeric
        Rated output [kW].
    poles : numeric
        Number of poles [-].
    frequency_hz : numeric
        Rated frequency [Hz].
    efficiency_pct : numeric
        Rated (nominal) full-load efficiency [%].

    Returns
    -------
    numpy.ndarray of str
        ``"IE4"``, ``"IE3"``, ``"IE2"``, ``"IE1"``: the highest class whose
        limit the efficiency meets (equal to the limit counts as meeting it);
        ``"below IE1"`` for an in-scope motor under the IE1 limit; ``""`` where
        the standard does not apply (see :func:`nominal_efficiency_pct`), the
        efficiency is NaN or outside (0, 100] %, or the efficiency is under
        IE2 where this module carries no IE1 limit. A scalar input gives a
        0-d result (a numpy str).

    Examples
    --------
    >>> str(efficiency_class(11.0, 4, 50.0, 91.4))
    'IE3'
    >>> efficiency_class(11.0, [4, 12], 50.0, [91.3, 91.3]).tolist()
    ['IE2', '']
    """
    p, n, f, eff = np.broadcast_arrays(np.asarray(rated_power_kw, dtype=float),
                                       np.asarray(poles, dtype=float),
                                       np.asarray(frequency_hz, dtype=float),
                                       np.asarray(efficiency_pct, dtype=float))
    shape = eff.shape
    limits = _all_limits_pct(p, n, f).reshape(len(IE_CLASSES), -1)
    eff = eff.ravel()
    with np.errstate(invalid="ignore"):
        valid_eff = np.isfinite(eff) & (eff > 0.0) & (eff <= 100.0)
        met = eff >= limits - _MEET_TOL_PCT                # NaN limit -> not met
    any_met = met.any(axis=0)
    highest = (len(IE_CLASSES) - 1) - np.argmax(met[::-1], axis=0)
    out = np.full(eff.shape, "", dtype="<U9")
    ok = valid_eff & any_met
    out[ok] = _CLASS_LABELS[highest[ok]]
    below = valid_eff & ~any_met & np.isfinite(limits[0])
    out[below] = BELOW_IE1
    out = out.reshape(shape)
    return out[()] if out.ndim == 0 else out


def typical_efficiency_pct(rated_power_kw, poles, frequency_hz):
    """Efficiency to assume when a nameplate gives none.

    Parameters
    ----------
    rated_power_kw : numeric
        Rated output [kW], 0.06 to 2000.
    poles : numeric
        Number of poles [-], integer 2 to 24.
    frequency_hz : numeric
        Rated frequency [Hz], 16 to 120.

    Returns
    -------
    numeric
        Efficiency [%]. Where the standard applies, the IE2 limit
        (:func:`nominal_efficiency_pct` with ``"IE2"``). Elsewhere a fallback:
        the IE2 value of the nearest covered motor (rated output clipped to
        0.12-1000 kW; poles rounded up to even and capped at 8; the 50 Hz
        table up to 55 Hz, the 60 Hz table above), with its losses
        ``100 - eta`` raised by :data:`EXTRA_LOSS_PER_POLE_PAIR` per pole pair
        beyond 8 poles and by ``(0.12 kW / P)**0.3`` below 0.12 kW, bounded to
        40-99 %. NaN outside the ranges above or for non-integer poles.

    Notes
    -----
    The fallback margins are this module's assumptions, not values from a
    standard; a result from the fallback is an estimate with a wide band.

    Examples
    --------
    >>> float(typical_efficiency_pct(7.5, 4, 50.0))
    88.7
    """
    p, n, f = np.broadcast_arrays(np.asarray(rated_power_kw, dtype=float),
                                  np.asarray(poles, dtype=float),
                                  np.asarray(frequency_hz, dtype=float))
    with np.errstate(invalid="ignore"):
        valid = (np.isfinite(p) & np.isfinite(n) & np.isfinite(f)
                 & (p >= TYPICAL_POWER_RANGE_KW[0] * (1.0 - _REL_TOL))
                 & (p <= TYPICAL_POWER_RANGE_KW[1] * (1.0 + _REL_TOL))
                 & (n >= TYPICAL_POLES_RANGE[0]) & (n <= TYPICAL_POLES_RANGE[1]) & (n == np.round(n))
                 & (f >= TYPICAL_FREQUENCY_RANGE_HZ[0] * (1.0 - _REL_TOL))
                 & (f <= TYPICAL_FREQUENCY_RANGE_HZ[1] * (1.0 + _REL_TOL)))
    in_standard = _all_limits_pct(p, n, f)[_CLASS_INDEX["IE2"]]
    p_near = np.clip(np.where(valid, p, 1.0), RATED_POWER_MIN_KW, RATED_POWER_MAX_KW)
    n_safe = np.where(valid, n, 4.0)
    n_near = np.minimum(2.0 * np.ceil(n_safe / 2.0), float(POLE_COUNTS[-1]))
    f_near = np.where(np.where(valid, f, 50.0) <= _FALLBACK_50HZ_UP_TO_HZ, 50.0, 60.0)
    base = _all_limits_pct(p_near, n_near, f_near)[_CLASS_INDEX["IE2"]]
    losses = 100.0 - base
    losses = losses * (1.0 + EXTRA_LOSS_PER_POLE_PAIR * np.maximum(0.0, (n_safe - POLE_COUNTS[-1]) / 2.0))
    p_safe = np.where(valid, p, RATED_POWER_MIN_KW)
    losses = losses * np.maximum(1.0, (RATED_POWER_MIN_KW / p_safe) ** SMALL_MOTOR_LOSS_EXPONENT)
    fallback = np.clip(100.0 - losses, *TYPICAL_EFFICIENCY_BOUNDS_PCT)
    out = np.where(np.isfinite(in_standard), in_standard, np.where(valid, fallback, np.nan))
    return out[()] if out.ndim == 0 else out
