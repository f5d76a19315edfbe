"""Physical constants and reference values used across atticsim (SI units)."""

#: Stefan-Boltzmann constant [W/(m^2 K^4)] (CODATA 2018, exact by definition since 2019 SI).
SIGMA = 5.670374419e-8
#: Offset between degrees Celsius and kelvin [K].
KELVIN = 273.15
#: Standard acceleration of gravity [m/s^2] (CGPM 1901, ISO 80000-3).
GRAVITY = 9.80665
#: Specific gas constant of dry air [J/(kg K)] (ISO 2533 standard atmosphere).
R_DRY_AIR = 287.055
#: Specific heat of air at constant pressure [J/(kg K)] near 20-60 degC
#: (ASHRAE Handbook Fundamentals, psychrometrics chapter; dry air 1.006 kJ/kgK).
CP_AIR = 1006.0
#: Standard sea-level pressure [Pa] (ISO 2533).
P_STANDARD = 101325.0
#: Seconds per hour.
HOUR = 3600.0
