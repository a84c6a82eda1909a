"""Unit conversions as named constants built from their definitions."""

import math

#: International foot [m] (exact, 1959 agreement).
FOOT_M = 0.3048
#: Pound-force [N]: 1 lb (0.45359237 kg, exact) under standard gravity 9.80665 m/s^2 (exact).
POUND_FORCE_N = 0.45359237 * 9.80665
#: Mechanical horsepower [W]: 550 ft*lbf/s.
HORSEPOWER_W = 550.0 * FOOT_M * POUND_FORCE_N
#: Kilowatt [W].
KILOWATT_W = 1000.0
#: Revolutions per minute to radians per second [rad/s per rpm].
RPM_TO_RAD_S = 2.0 * math.pi / 60.0
#: Seconds in a minute [s].
MINUTE_S = 60.0
#: Square root of three: line-to-line to line-to-neutral ratio of a balanced system.
SQRT3 = math.sqrt(3.0)
