"""A compiled, scalar right-hand side of the attic network, for a compiled time-stepping solver.

:func:`rhs` evaluates, for ONE state, what :meth:`atticsim.network.model.AtticNetwork.derivatives` gives
for a column: the node temperature derivatives [K/s] in the network's node order, then the rates of the
energy books [W] in the order of :data:`atticsim.network.model.BOOKS`. It mirrors ``AtticNetwork.flows``
and ``AtticNetwork.derivatives`` term by term (the same equations, sources and order of operations, so
that the two agree to rounding); ``tests/test_kernel_rhs.py`` holds them equal on every scenario,
placement, sensor body, layer count and fan state. A change to the network's physics must be made in
both places.

Usage::

    packed = pack(network)             # once per network
    air = air_vector(network.air)      # at every airflow update
    out = np.empty(packed.n_out)
    rhs(x, u, 1.0 if fan_on else 0.0, air, packed.prm, packed.planes, packed.ints, packed.heat, out)

:func:`rhs` is a numba ``njit`` function that allocates nothing; it can be called from other compiled
code. Its parameters live in plain arrays (:class:`Packed`), laid out by the index constants below.

The sensor's self-heating, when the network's ``sensor_power`` is a function (the circuit thermostat's
exact divider dissipation), is tabulated once by :func:`pack` and interpolated linearly (see
:data:`HEAT_STEP` for the error that implies); a constant ``sensor_power`` is carried exactly.
"""

from __future__ import annotations

import inspect
import math
import operator
from typing import NamedTuple

import numba
import numpy as np

from atticsim import jitcache
from atticsim.constants import CP_AIR, GRAVITY, KELVIN, SIGMA
from atticsim import air as _moist_air
from atticsim.air import H_FG, MAGNUS_A, MAGNUS_B_C, MAGNUS_C_PA, MOLAR_MASS_RATIO
from atticsim.network.heat_transfer import _EPS2, forced_convection_sparrow
from atticsim.network.model import BOOKS, FORCING_BASE
from atticsim.network.placement import INTAKE_FULL_SPEED, PLACEMENTS, STILL_ATTIC_SPEED
from atticsim.sensor import air as _air
from atticsim.sensor import convection as _conv
from atticsim.sensor.body import BODY_SHAPES

jitcache.check()  # stale compiled code out before numba loads any (see atticsim.jitcache)
jitcache.route()  # this module's compiled functions cache in atticsim's own folder

# numba options for everything here: IEEE results (inf, nan) instead of exceptions on division by zero,
# as numpy gives them to the vectorised model; no fast-math, so the arithmetic stays that of the model.
_JIT = {"error_model": "numpy"}

# --- layout of the packed parameters ----------------------------------------------------------------------

#: Scalar parameters, rows of ``Packed.prm``.
(_ABSORPTANCE, _EMITTANCE, _ROUGHNESS, _FLOOR_AREA, _C_AIR, _W_UP, _F_UP, _LAYER_MIXING, _FAN_MIXING,
 _INTERFACE_AREA, _FRAMING_AREA, _C_FRAMING, _C_CEILING_TOP, _C_GYPSUM, _R_INSULATION, _R_ROOM, _ROOM_T,
 _ROOM_W, _PRESSURE, _SENSOR_G, _SENSOR_C, _CONTACT_G, _FAN_AREA, _INTAKE_AREA, _ENCLOSURE_G, _C_ENCLOSURE,
 _TRIAC_LOSS, _BODY_SCALE, _BODY_AREA, _BODY_D, _BODY_EMITTANCE, _HEAT_T0, _HEAT_DT) = range(33)
N_PRM = 33
#: Per-plane parameters, columns of ``Packed.planes`` (one row per plane).
(_AREA, _COS_TILT, _PERIMETER, _F_SKY, _F_GROUND, _C_COVER, _C_DECK, _U_COVER_DECK, _G_DECK_FLOOR,
 _DECK_SHARE) = range(10)
N_PLANE_COLS = 10
#: Integers, entries of ``Packed.ints`` (node indices; -1 for an absent node or body).
(_N_PLANES, _LAYERS, _I_LOWER, _I_UPPER, _I_FRAMING, _I_CEILING_TOP, _I_GYPSUM, _I_ENCLOSURE, _I_SENSOR,
 _PLACEMENT, _SHAPE, _N_NODES) = range(12)
N_INTS = 12

#: Placement codes (``ints[_PLACEMENT]``); every placement of :data:`PLACEMENTS` must have one.
PLACEMENT_CODES = {"ridge": 0, "mid": 1, "exhaust": 2, "intake": 3, "deck": 4, "board": 5}
#: Convection geometry codes of a sensor body (``ints[_SHAPE]``; -1: no body).
SHAPE_CODES = {"sphere": 0, "cylinder": 1}
#: Order of :func:`air_vector`.
AIR_ORDER = ("in_lower", "in_upper", "out_lower", "house_in", "attic_to_house", "fan_flow", "fan_power")
_IN_LOWER, _IN_UPPER, _OUT_LOWER, _HOUSE_IN, _ATTIC_TO_HOUSE, _FAN_FLOW, _FAN_POWER = range(7)

#: Self-heating table for a ``sensor_power`` function: sensor temperatures HEAT_T_MIN..HEAT_T_MAX [degC]
#: every HEAT_STEP [K], linear interpolation, clamped to the end values outside (a numerical choice of
#: ours). Linear interpolation errs by at most HEAT_STEP^2 / 8 max|P''| = 1.25e-5 K^2 max|P''| (standard
#: interpolation error bound): for the circuit's divider dissipation, whose curvature is of order P / (30 K)^2,
#: about 1e-8 of P, far below any effect on the sensor (pack reports the bound, ``Packed.heat_error``,
#: estimated from the table's second differences).
HEAT_T_MIN, HEAT_T_MAX, HEAT_STEP = -80.0, 160.0, 0.01

_N_FORCING_BASE = len(FORCING_BASE)
_N_BOOKS = len(BOOKS)
assert BOOKS == ("solar", "sky", "ground", "exterior_convection", "ventilation", "ceiling_gain", "triac_heat",
                 "fan_electric", "house_air_sensible", "house_air_latent"), "kernel.rhs writes the books in this order"
assert FORCING_BASE == ("temp_out", "temp_sky_k", "wind_speed", "temp_dew"), \
    "kernel.rhs reads the forcing in this order"

#: Defaults the network relies on, read from their single source.
_WINDWARD = inspect.signature(forced_convection_sparrow).parameters["windward_factor"].default
_MIXED_EXPONENT = inspect.signature(_conv._h).parameters["n"].default
assert inspect.signature(_conv._h).parameters["sphere_correlation"].default == "whitaker"
_LOG2 = math.log(2.0)


class Packed(NamedTuple):
    """A network's parameters as plain arrays for :func:`rhs` (layout: the index constants of this module).

    prm : float64[N_PRM]; planes : float64[P, N_PLANE_COLS]; ints : int64[N_INTS];
    heat : float64[2, m], sensor self-heating [W] at HEAT_T0 + i HEAT_DT (row 0 fan off, row 1 fan on;
    m = 1 for a constant); heat_error : bound on the table's interpolation error [W] (0 for a constant);
    n_nodes, n_out : node count and length of rhs's output (nodes then books).
    """

    prm: np.ndarray
    planes: np.ndarray
    ints: np.ndarray
    heat: np.ndarray
    heat_error: float
    n_nodes: int
    n_out: int


def pack(network) -> Packed:
    """The parameters of an :class:`~atticsim.network.model.AtticNetwork` as a :class:`Packed`."""
    if network.placement not in PLACEMENT_CODES:
        raise ValueError(f"sensor placement {network.placement!r} has no compiled form in atticsim.network.kernel")
    if network.place is not PLACEMENTS[network.placement]:
        raise ValueError("the network's placement function is not the standard one; kernel.rhs cannot mirror it")
    P = network.n_planes
    area = np.asarray(network.area, dtype=float).reshape(P)
    planes = np.zeros((P, N_PLANE_COLS))
    planes[:, _AREA] = area
    for col, value in ((_COS_TILT, network.cos_tilt), (_PERIMETER, network.perimeter), (_F_SKY, network.f_sky),
                       (_F_GROUND, network.f_ground), (_C_COVER, network.c_cover), (_C_DECK, network.c_deck),
                       (_U_COVER_DECK, network.u_cover_deck), (_G_DECK_FLOOR, network.g_deck_floor)):
        planes[:, col] = np.broadcast_to(np.asarray(value, dtype=float).reshape(-1), (P,))
    planes[:, _DECK_SHARE] = area / area.sum()  # the sensor's area-weighted deck temperature, as flows()

    prm = np.zeros(N_PRM)
    prm[_ABSORPTANCE], prm[_EMITTANCE], prm[_ROUGHNESS] = network.absorptance, network.emittance, network.roughness
    prm[_FLOOR_AREA], prm[_C_AIR] = network.floor_area, network.c_air
    prm[_W_UP], prm[_F_UP] = network.w_up, network.f_up
    prm[_LAYER_MIXING], prm[_FAN_MIXING] = network.layer_mixing, network.fan_mixing_ratio
    prm[_INTERFACE_AREA], prm[_FRAMING_AREA] = network.interface_area, network.framing_area
    prm[_C_FRAMING], prm[_C_CEILING_TOP], prm[_C_GYPSUM] = network.c_framing, network.c_ceiling_top, network.c_gypsum
    prm[_R_INSULATION], prm[_R_ROOM] = network.r_insulation, network.r_room
    prm[_ROOM_T], prm[_ROOM_W], prm[_PRESSURE] = network.room_temperature, network.room_humidity_ratio, network.pressure
    prm[_SENSOR_G], prm[_SENSOR_C] = network.sensor_conductance, network.sensor_capacity
    prm[_CONTACT_G], prm[_FAN_AREA], prm[_INTAKE_AREA] = (network.contact_conductance, network.fan_area,
                                                          network.intake_area)
    prm[_ENCLOSURE_G], prm[_C_ENCLOSURE] = network.enclosure_conductance, network.c_enclosure
    prm[_TRIAC_LOSS] = network.triac_loss
    shape = -1
    body = network.sensor_body
    if body is not None:
        shape = SHAPE_CODES[BODY_SHAPES[body.shape]]
        prm[_BODY_SCALE], prm[_BODY_AREA] = body._scale, body.area
        prm[_BODY_D], prm[_BODY_EMITTANCE] = body.convection_diameter, body.emittance
    heat, t0, dt, heat_error = _heat_table(network.sensor_power)
    prm[_HEAT_T0], prm[_HEAT_DT] = t0, dt

    idx = network.index
    ints = np.zeros(N_INTS, dtype=np.int64)
    ints[_N_PLANES], ints[_LAYERS] = P, network.layers
    ints[_I_LOWER], ints[_I_UPPER] = network.i_lower, network.i_upper
    ints[_I_FRAMING], ints[_I_CEILING_TOP], ints[_I_GYPSUM] = idx["framing"], idx["ceiling_top"], idx["gypsum"]
    ints[_I_ENCLOSURE] = -1 if network.i_enclosure is None else network.i_enclosure
    ints[_I_SENSOR] = network.n_nodes - 1  # derivatives() writes the sensor's balance to the last node
    ints[_PLACEMENT], ints[_SHAPE], ints[_N_NODES] = PLACEMENT_CODES[network.placement], shape, network.n_nodes
    if network.layers not in (1, 2):
        raise ValueError(f"attic air layers must be 1 or 2, got {network.layers!r}")
    if idx.get("sensor") != network.n_nodes - 1:
        raise ValueError("the sensor must be the network's last node")
    return Packed(prm, planes, ints, heat, heat_error, network.n_nodes, network.n_nodes + _N_BOOKS)


def _heat_table(power):
    """(table float64[2, m], t0, dt, interpolation error bound [W]) of the sensor's self-heating."""
    if not callable(power):
        return np.full((2, 1), float(power)), 0.0, 1.0, 0.0
    m = round((HEAT_T_MAX - HEAT_T_MIN) / HEAT_STEP) + 1
    grid = HEAT_T_MIN + HEAT_STEP * np.arange(m)  # the same nodes rhs interpolates between
    heat = np.empty((2, m))
    for row, on in enumerate((False, True)):
        values = None
        try:
            values = np.asarray(power(grid, on), dtype=float)
            if values.shape != grid.shape:
                values = None
            else:
                # trust the array form only if it agrees with scalar calls
                probe = (0, m // 3, m // 2, m - 1)
                if not all(abs(values[i] - float(power(float(grid[i]), on)))
                           <= 1e-12 * abs(values[i]) + 1e-300 for i in probe):
                    values = None
        except Exception:  # noqa: BLE001 - a callable that takes scalars only: evaluate point by point
            values = None
        if values is None:
            values = np.array([float(power(float(t), on)) for t in grid])
        heat[row] = values
    if not np.all(np.isfinite(heat)):
        raise ValueError("sensor self-heating is not finite over the tabulated range "
                         f"{HEAT_T_MIN:g} to {HEAT_T_MAX:g} degC")
    # Linear interpolation between nodes errs by at most h^2 max|P''| / 8 = max|second difference| / 8 for a
    # smooth P; /4 allows for a kink inside a cell (error up to h |slope jump| / 4).
    error = float(np.max(np.abs(np.diff(heat, 2, axis=1)))) / 4.0
    return heat, HEAT_T_MIN, HEAT_STEP, error


_AIR_ORDER_VALUES = operator.attrgetter(*AIR_ORDER)  # (AIR_ORDER's fields of an AirflowState, as a tuple)


def air_vector(air) -> np.ndarray:
    """The air flows :func:`rhs` reads, from an AirflowState: float64[7] in :data:`AIR_ORDER`."""
    return np.array(_AIR_ORDER_VALUES(air), dtype=float)


# --- scalar helpers ------------------------------------------------------------------------------------
# The pure-arithmetic correlations of atticsim.sensor are compiled as they are (one source); the array
# functions of atticsim.network get scalar twins here, each with its source.

_mu_k = numba.njit(**_JIT)(_air._mu_k)                            # US Std. Atmosphere 1976 eqs. 51, 53
_rayleigh = numba.njit(**_JIT)(_conv._rayleigh)                   # Incropera & DeWitt section 9.4
_nu_whitaker = numba.njit(**_JIT)(_conv._nu_whitaker)             # Whitaker (1972) sphere
_nu_sphere_natural = numba.njit(**_JIT)(_conv._nu_sphere_natural)  # Churchill (1983) sphere
_nu_churchill_bernstein = numba.njit(**_JIT)(_conv._nu_churchill_bernstein)  # Churchill & Bernstein (1977)
_nu_cylinder_natural = numba.njit(**_JIT)(_conv._nu_cylinder_natural)  # Churchill & Chu (1975)
_nu_mixed = numba.njit(**_JIT)(_conv._nu_mixed)                   # Churchill (1977) superposition
_AirProperties = _air.AirProperties
_NU_CONDUCTION_SPHERE = _conv.NU_CONDUCTION_SPHERE


@numba.njit(cache=True, **_JIT)
def _walton(delta_t, cos_tilt, facing_up):
    """Scalar :func:`atticsim.network.heat_transfer.natural_convection_walton` [W/(m2 K)]."""
    # Walton 1983, NBSIR 83-2655 (from memory): unstable h = 9.482 |dT|^(1/3) / (7.238 - |cos S|),
    # stable h = 1.810 |dT|^(1/3) / (1.382 + |cos S|); |dT|^(1/3) smoothed as (dT^2 + eps^2)^(1/6)
    # (numerical choice, ours)
    c = abs(cos_tilt)
    cube = (delta_t * delta_t + _EPS2) ** (1.0 / 6.0)
    unstable = delta_t > 0.0 if facing_up else delta_t < 0.0
    if unstable:
        return 9.482 * cube / (7.238 - c)
    return 1.810 * cube / (1.382 + c)


@numba.njit(cache=True, **_JIT)
def _sparrow(wind_speed, perimeter, area, roughness):
    """Scalar :func:`atticsim.network.heat_transfer.forced_convection_sparrow` (W_f its default) [W/(m2 K)]."""
    # Sparrow, Ramsey & Mass 1979 as in Walton 1983, NBSIR 83-2655 (from memory): h = 2.537 W_f R_f sqrt(P V / A)
    v = max(wind_speed, 0.0)
    return 2.537 * _WINDWARD * roughness * math.sqrt(perimeter * v / area)


_air_density = numba.njit(cache=True, **_JIT)(_moist_air.air_density)  # ideal gas, ISO 2533 R_d


@numba.njit(cache=True, **_JIT)
def _humidity_ratio(temp_dew, pressure):
    """Scalar :func:`atticsim.air.humidity_ratio` [kg/kg]."""
    # saturation pressure at the dew point, Magnus form, Alduchov & Eskridge (1996) eq. 21
    p_w = MAGNUS_C_PA * math.exp(MAGNUS_A * temp_dew / (temp_dew + MAGNUS_B_C))
    # W = 0.621945 p_w / (p - p_w) (ASHRAE Handbook Fundamentals, psychrometrics chapter, eq. 20 and 36)
    return MOLAR_MASS_RATIO * p_w / (pressure - p_w)


@numba.njit(cache=True, **_JIT)
def _softplus_01(x):
    """0.1 ln(1 + exp(x / 0.1)), as ``0.1 * np.logaddexp(0.0, x / 0.1)`` (numpy's branches)."""
    # smoothed onset of the buoyant overturning over ~0.1 K (numerical choice, see AtticNetwork.flows)
    y = x / 0.1
    if y == 0.0:
        s = _LOG2
    elif y < 0.0:
        s = math.log1p(math.exp(y))
    elif y > 0.0:
        s = y + math.log1p(math.exp(-y))
    else:
        s = y  # NaN
    return 0.1 * s


@numba.njit(cache=True, **_JIT)
def _properties_k(t_k, pressure):
    """Scalar :func:`atticsim.sensor.air._properties_k` (air properties at t_k [K])."""
    mu, k = _mu_k(t_k)                                # US Std. Atmosphere 1976 eqs. 51, 53
    rho = _air_density(t_k - KELVIN, pressure)        # ideal gas, ISO 2533 R_d
    nu = mu / rho                                     # definition
    alpha = k / (rho * CP_AIR)                        # definition
    return _AirProperties(k, mu, nu, alpha, CP_AIR * mu / k)  # Pr = c_p mu / k (definition)


@numba.njit(cache=True, **_JIT)
def _h_body(cylinder, d, v, t_air_k, t_s_k, pressure):
    """Scalar :func:`atticsim.sensor.convection._h` with its defaults (Whitaker sphere, exponent 3) [W/(m2 K)]."""
    t_film = 0.5 * (t_air_k + t_s_k)                  # film temperature (Incropera & DeWitt section 7.5)
    p = _properties_k(t_film, pressure)
    re = v * d / p.kinematic_viscosity                # definition
    ra = _rayleigh(t_air_k, t_s_k, t_film, d, p)      # Incropera & DeWitt section 9.4
    if cylinder:
        # Churchill & Bernstein (1977) forced, Churchill & Chu (1975) free, Churchill's superposition
        nu = _nu_mixed(_nu_churchill_bernstein(re, p.prandtl), _nu_cylinder_natural(ra, p.prandtl), 0.0,
                       _MIXED_EXPONENT)
    else:
        # Whitaker (1972) forced, Churchill (1983) free, superposed above the conduction limit Nu = 2
        nu = _nu_mixed(_nu_whitaker(re, p.prandtl), _nu_sphere_natural(ra, p.prandtl), _NU_CONDUCTION_SPHERE,
                       _MIXED_EXPONENT)
    return nu * p.conductivity / d                    # h = Nu k / D (definition)


@numba.njit(cache=True, **_JIT)
def _self_heating(t_s, fan, prm, heat):
    """Sensor self-heating [W] from the table (row by fan state), linear interpolation, clamped."""
    row = 1 if fan > 0.0 else 0
    m = heat.shape[1]
    if m == 1:
        return heat[row, 0]  # constant sensor_power
    s = (t_s - prm[_HEAT_T0]) / prm[_HEAT_DT]
    if math.isnan(s):
        return s  # NaN temperature: NaN power, as the function would give
    if s <= 0.0:
        return heat[row, 0]
    if s >= m - 1:
        return heat[row, m - 1]
    i = int(s)
    f = s - i
    return heat[row, i] + f * (heat[row, i + 1] - heat[row, i])


@numba.njit(cache=True, _nrt=False, **_JIT)
def rhs(x, u, fan, air, prm, planes, ints, heat, out):
    """Node temperature derivatives [K/s] then the books' rates [W] at one state, written into ``out``.

    Parameters
    ----------
    x : float64[n_nodes]
        Node temperatures [degC] in the network's node order.
    u : float64[4 + P]
        Forcing: temp_out [degC], temp_sky_k [K], wind_speed [m/s], temp_dew [degC], then the
        plane-of-array irradiance of each plane [W/m2].
    fan : float
        Fan state, 0.0 off or 1.0 on.
    air : float64[7]
        Held air flows in :data:`AIR_ORDER` (:func:`air_vector`).
    prm, planes, ints, heat
        The network's :class:`Packed` arrays.
    out : float64[n_nodes + 10]
        Filled with what ``AtticNetwork.derivatives`` gives for this column.
    """
    n_p = ints[_N_PLANES]
    n = ints[_N_NODES]
    i_lo, i_up = ints[_I_LOWER], ints[_I_UPPER]
    i_enc = ints[_I_ENCLOSURE]
    t_lo, t_up = x[i_lo], x[i_up]
    t_fr, t_ct, t_gyp = x[ints[_I_FRAMING]], x[ints[_I_CEILING_TOP]], x[ints[_I_GYPSUM]]
    t_s = x[ints[_I_SENSOR]]
    t_out, t_sky_k, wind, t_dew = u[0], u[1], u[2], u[3]
    k_out = t_out + KELVIN
    k_out4 = k_out * k_out * k_out * k_out
    k_sky4 = t_sky_k * t_sky_k * t_sky_k * t_sky_k
    k_ct = t_ct + KELVIN
    k_ct4 = k_ct * k_ct * k_ct * k_ct
    in_lower, in_upper, out_lower = air[_IN_LOWER], air[_IN_UPPER], air[_OUT_LOWER]
    house_in, attic_to_house = air[_HOUSE_IN], air[_ATTIC_TO_HOUSE]
    fan_flow, fan_power = air[_FAN_FLOW], air[_FAN_POWER]
    absorptance, emittance, roughness = prm[_ABSORPTANCE], prm[_EMITTANCE], prm[_ROUGHNESS]
    f_up = prm[_F_UP]
    pressure = prm[_PRESSURE]
    room_t = prm[_ROOM_T]
    floor_area = prm[_FLOOR_AREA]

    # --- roof planes: exterior, conduction, deck underside (per plane), summed for the books and the air
    b_solar = 0.0
    b_sky = 0.0
    b_ground = 0.0
    b_ext = 0.0
    deck_up = 0.0
    deck_lo = 0.0
    deck_floor = 0.0
    t_deck_mean = 0.0
    for p in range(n_p):
        area = planes[p, _AREA]
        cos_tilt = planes[p, _COS_TILT]
        t_cov = x[p]
        t_deck = x[n_p + p]
        k_cov = t_cov + KELVIN
        k_cov4 = k_cov * k_cov * k_cov * k_cov
        # absorbed solar alpha I A (common practice)
        q_solar = absorptance * u[_N_FORCING_BASE + p] * area
        # long-wave to sky and ground, eps sigma A F (T^4 - T_x^4), isotropic view factors
        # (Duffie & Beckman sect. 2.15 and 3.9), ground at air temperature
        q_sky = emittance * SIGMA * area * planes[p, _F_SKY] * (k_sky4 - k_cov4)
        q_ground = emittance * SIGMA * area * planes[p, _F_GROUND] * (k_out4 - k_cov4)
        # exterior convection: sum of Sparrow's forced and Walton's natural term
        # (Walton 1983, NBSIR 83-2655, from memory)
        h_ext = (_sparrow(wind, planes[p, _PERIMETER], area, roughness)
                 + _walton(t_cov - t_out, cos_tilt, True))
        q_ext = h_ext * area * (t_out - t_cov)
        # conduction cover -> deck through half of each layer (Incropera & DeWitt, plane wall, chapter 3)
        q_cond = planes[p, _U_COVER_DECK] * area * (t_cov - t_deck)
        # deck underside -> each air layer by Walton natural convection, area shared by f_up
        q_deck_up = _walton(t_deck - t_up, cos_tilt, False) * f_up * area * (t_deck - t_up)
        q_deck_lo = _walton(t_deck - t_lo, cos_tilt, False) * (1 - f_up) * area * (t_deck - t_lo)
        # deck <-> attic floor, gray two-surface exchange sigma G (T1^4 - T2^4) (Incropera & DeWitt,
        # radiation exchange chapter)
        k_deck = t_deck + KELVIN
        q_deck_floor = SIGMA * planes[p, _G_DECK_FLOOR] * (k_deck * k_deck * k_deck * k_deck - k_ct4)
        out[p] = (q_solar + q_sky + q_ground + q_ext - q_cond) / planes[p, _C_COVER]
        out[n_p + p] = (q_cond - q_deck_up - q_deck_lo - q_deck_floor) / planes[p, _C_DECK]
        b_solar += q_solar
        b_sky += q_sky
        b_ground += q_ground
        b_ext += q_ext
        deck_up += q_deck_up
        deck_lo += q_deck_lo
        deck_floor += q_deck_floor
        t_deck_mean += planes[p, _DECK_SHARE] * t_deck

    # --- framing and attic floor to the air, Walton natural convection (vertical framing, floor facing up)
    a_fr = prm[_FRAMING_AREA]
    q_fr_up = _walton(t_fr - t_up, 0.0, True) * f_up * a_fr * (t_fr - t_up)
    q_fr_lo = _walton(t_fr - t_lo, 0.0, True) * (1 - f_up) * a_fr * (t_fr - t_lo)
    q_ceiling_air = _walton(t_ct - t_lo, 1.0, True) * floor_area * (t_ct - t_lo)

    # --- air paths: c_p m (T_in - T_layer) for the air entering each layer (enthalpy flow, common practice)
    vent_lo = CP_AIR * (in_lower * (t_out - t_lo) + house_in * (room_t - t_lo))
    vent_up = CP_AIR * in_upper * (t_out - t_up)
    q_mix = 0.0
    if ints[_LAYERS] == 2:
        f_lu = in_lower + house_in - out_lower - attic_to_house
        vent_up = vent_up + CP_AIR * max(f_lu, 0.0) * (t_lo - t_up)
        vent_lo = vent_lo + CP_AIR * max(-f_lu, 0.0) * (t_up - t_lo)
        # buoyant overturning Q = 0.055 A sqrt(g' sqrt(A)) (Epstein 1988, J. Fluid Mech. 189; from memory),
        # onset smoothed over ~0.1 K by a softplus (numerical choice, ours)
        unstable = _softplus_01(t_lo - t_up)
        a_i = prm[_INTERFACE_AREA]
        q_b = 0.055 * a_i * math.sqrt(GRAVITY * unstable / (0.5 * (t_lo + t_up) + KELVIN) * math.sqrt(a_i))
        q_mix_flow = prm[_LAYER_MIXING] + prm[_FAN_MIXING] * fan * fan_flow + q_b
        q_mix = _air_density(t_lo, pressure) * CP_AIR * q_mix_flow * (t_lo - t_up)

    # --- house-air books: sensible c_p m dT and latent h_fg m dW (ASHRAE Handbook Fundamentals,
    # psychrometrics chapter)
    q_house_s = CP_AIR * (house_in * (t_out - room_t) + attic_to_house * (t_lo - room_t))
    w_out = _humidity_ratio(t_dew, pressure)
    q_house_l = H_FG * (house_in + attic_to_house) * (w_out - prm[_ROOM_W])
    # --- ceiling: insulation R-value, room film (plane-wall conduction, Incropera & DeWitt chapter 3)
    q_insulation = floor_area * (t_ct - t_gyp) / prm[_R_INSULATION]
    q_room = floor_area * (t_gyp - room_t) / prm[_R_ROOM]

    q_triac = fan * prm[_TRIAC_LOSS]
    if i_enc >= 0:
        t_enc = x[i_enc]
        q_enc_air = prm[_ENCLOSURE_G] * (t_enc - t_lo)
    else:
        t_enc = t_lo
        q_enc_air = 0.0

    # --- the sensor: local conditions of its placement (atticsim.network.placement; speeds and mixing
    # weights are engineering assumptions, common practice, no source)
    place = ints[_PLACEMENT]
    fan_on = fan > 0
    g_contact = 0.0
    t_contact = 0.0
    if place == 0:  # ridge
        t_air = t_up
        speed = 0.5 if fan_on else STILL_ATTIC_SPEED
        t_rad = t_deck_mean
    elif place == 1:  # mid
        t_air = 0.5 * (t_up + t_lo)
        speed = 0.3 if fan_on else STILL_ATTIC_SPEED
        t_rad = 0.5 * (t_deck_mean + t_ct)
    elif place == 2:  # exhaust: the fan's face velocity while it runs
        face = fan_flow / prm[_FAN_AREA]
        t_air = t_up
        speed = max(face, STILL_ATTIC_SPEED) if fan_on else STILL_ATTIC_SPEED
        t_rad = t_deck_mean
    elif place == 3:  # intake: outdoor share phi = min(1, v_in / 1 m/s)
        intake_flow = in_lower / _air_density(t_out, pressure)
        v_in = intake_flow / prm[_INTAKE_AREA]
        phi = min(1.0, v_in / INTAKE_FULL_SPEED)
        t_air = t_lo + phi * (t_out - t_lo)
        speed = max(0.5 * v_in, STILL_ATTIC_SPEED)
        t_rad = 0.5 * (t_deck_mean + t_ct)
    elif place == 4:  # deck: taped to the deck underside
        t_air = t_up
        speed = 0.3 if fan_on else STILL_ATTIC_SPEED
        t_rad = t_ct
        t_contact = t_deck_mean
        g_contact = prm[_CONTACT_G]
    else:  # board: inside the control box
        t_air = t_enc
        speed = 0.05
        t_rad = t_enc
    shape = ints[_SHAPE]
    if shape < 0:
        g_air = prm[_SENSOR_G]
        g_rad = 0.0
    else:
        k_s = t_s + KELVIN
        k_r = t_rad + KELVIN
        # G_c = scale h A, h from the body's correlations (atticsim.sensor.body, SensorBody._g_conv)
        g_air = prm[_BODY_SCALE] * prm[_BODY_AREA] * _h_body(shape == 1, prm[_BODY_D], speed, t_air + KELVIN,
                                                              k_s, pressure)
        # small body in large surroundings, Incropera & DeWitt eq. 1.9 (secant form of eps sigma dT^4)
        g_rad = prm[_BODY_EMITTANCE] * SIGMA * prm[_BODY_AREA] * (k_s * k_s + k_r * k_r) * (k_s + k_r)
    # lumped capacitance (Incropera & DeWitt section 5.1)
    q_sensor = g_air * (t_air - t_s) + g_rad * (t_rad - t_s) + g_contact * (t_contact - t_s)
    p_self = _self_heating(t_s, fan, prm, heat)
    p_fan = fan * fan_power

    # --- node balances (as AtticNetwork.derivatives)
    lower = deck_lo + q_fr_lo + q_ceiling_air + vent_lo - q_mix + q_enc_air
    upper = deck_up + q_fr_up + vent_up + q_mix
    c_air = prm[_C_AIR]
    if ints[_LAYERS] == 2:
        w_up = prm[_W_UP]
        out[i_lo] = lower / (c_air * (1.0 - w_up))
        out[i_up] = upper / (c_air * w_up)
    else:
        out[i_lo] = (lower + upper) / c_air
    out[ints[_I_FRAMING]] = -(q_fr_up + q_fr_lo) / prm[_C_FRAMING]
    out[ints[_I_CEILING_TOP]] = (deck_floor - q_ceiling_air - q_insulation) / prm[_C_CEILING_TOP]
    out[ints[_I_GYPSUM]] = (q_insulation - q_room) / prm[_C_GYPSUM]
    if i_enc >= 0:
        out[i_enc] = (q_triac - q_enc_air) / prm[_C_ENCLOSURE]
    out[n - 1] = (q_sensor + p_self) / prm[_SENSOR_C]
    # --- books, in the order of BOOKS
    out[n] = b_solar
    out[n + 1] = b_sky
    out[n + 2] = b_ground
    out[n + 3] = b_ext
    out[n + 4] = vent_lo + vent_up
    out[n + 5] = q_room
    out[n + 6] = q_triac
    out[n + 7] = p_fan
    out[n + 8] = q_house_s
    out[n + 9] = q_house_l


jitcache.restore()
