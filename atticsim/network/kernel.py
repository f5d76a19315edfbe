"""The attic network's physics, compiled: every heat flow written once, for every solver.

:func:`_network` evaluates every heat flow of the network at ONE state (the roof planes, the air paths, the
ceiling, the sensor by its placement); :func:`rhs` forms from it the node temperature derivatives [K/s] in
the network's node order, then the rates of the energy books [W] in the order of :data:`BOOKS`;
:func:`flows` gives the named flows of :data:`FLOWS` (the results read them at the output instants).
The compiled solver calls :func:`rhs` from compiled code; the reference solver and the results call it (or
:func:`flows`) through :class:`atticsim.network.model.AtticNetwork`. The correlations are compiled from
their single sources (:mod:`atticsim.network.heat_transfer`, :mod:`atticsim.air`,
:mod:`atticsim.network.placement`, the sensor correlations of :mod:`atticsim.sensor`).

Usage::

    packed = pack(network)             # once per network
    air = air_vector(network.air)      # at every airflow update
    out = np.empty(packed.n_out)
    rhs(x, u, 1.0 if fan_on else 0.0, air, packed.prm, packed.planes, packed.ints, packed.heat, out)

:func:`rhs` allocates nothing; it can be called from other compiled code. Its parameters live in plain
arrays (:class:`Packed`), laid out by the index constants below.

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
from atticsim.air import H_FG
from atticsim.network import heat_transfer
from atticsim.network.heat_transfer import _EPS2
from atticsim.network import placement as _placement
from atticsim.network.placement import PLACEMENTS
from atticsim.sensor import air as _air
from atticsim.sensor import convection as _conv
from atticsim.sensor.body import BODY_SHAPES

jitcache.check()  # stale compiled code out before numba loads any (see atticsim.jitcache)
jitcache.route()  # this module's compiled functions cache in atticsim's own folder

# numba options for everything here: IEEE results (inf, nan) instead of exceptions on division by zero,
# as numpy would give them; no fast-math, so the arithmetic stays as written.
_JIT = {"error_model": "numpy"}


def compiled(function, **callees):
    """``function`` compiled for the network (numba, cached), from its own source: the global names in
    ``callees`` that it calls are bound to their compiled forms (so that a correlation calling another is
    still written once)."""
    import types

    if callees:
        scope = dict(function.__globals__)
        scope.update(callees)
        function = types.FunctionType(function.__code__, scope, function.__name__, function.__defaults__)
    return numba.njit(cache=True, **_JIT)(function)

# --- names ---------------------------------------------------------------------------------------------

#: Names of the energy books, in state order after the temperatures.
BOOKS = ("solar", "sky", "ground", "exterior_convection", "ventilation", "ceiling_gain", "triac_heat",
         "fan_electric", "house_air_sensible", "house_air_latent")
#: Books that cross the attic's boundary (the energy closure uses these).
ATTIC_BOOKS = BOOKS[:7]
#: Forcing channels before the per-plane irradiance channels.
FORCING_BASE = ("temp_out", "temp_sky_k", "wind_speed", "temp_dew", "pressure", "temp_room")
#: The named heat flows of :func:`flows` [W] (per-plane flows summed over the planes; ``*_upper`` and
#: ``*_lower`` are the parts that reach each air layer; ``sensor_local_air`` [degC] and
#: ``sensor_local_speed`` [m/s] are what the sensor's placement gives it).
FLOWS = ("solar", "sky", "ground", "exterior_convection", "cover_deck", "deck_upper", "deck_lower", "deck_floor",
         "framing_upper", "framing_lower", "ceiling_air", "ventilation_lower", "ventilation_upper", "ventilation",
         "layer_exchange", "insulation", "ceiling_gain", "sensor", "fan_electric", "house_air_sensible",
         "house_air_latent", "sensor_self_heating", "triac_heat", "enclosure_air", "sensor_local_air",
         "sensor_local_speed")
N_FLOWS = len(FLOWS)
#: Per roof plane: the net heat gained by its cover and by its deck [W], the temperatures of its outer
#: surface and of the deck's underside [degC].
PLANE_FLOWS = ("cover_net", "deck_net", "roof_surface", "deck_underside")
#: Newton steps for the massless surface temperatures, from the layer's own temperature (three leave an error
#: below 1e-4 K from calm night to hot noon, two up to 0.006 K: tests/network/test_network_surfaces.py).
SURFACE_STEPS = 3

# --- layout of the packed parameters ----------------------------------------------------------------------

#: Scalar parameters, rows of ``Packed.prm``.
(_ABSORPTANCE, _EMITTANCE, _ROUGHNESS, _FLOOR_AREA, _C_AIR, _W_UP, _F_UP, _F_UP_FRAMING, _LAYER_MIXING, _FAN_MIXING,
 _INTERFACE_AREA, _FRAMING_AREA, _C_FRAMING, _C_CEILING_TOP, _C_GYPSUM, _R_INSULATION, _R_ROOM,
 _ROOM_RH, _SENSOR_G, _SENSOR_C, _CONTACT_G, _FAN_AREA, _INTAKE_AREA, _ENCLOSURE_G, _C_ENCLOSURE,
 _TRIAC_LOSS, _BODY_SCALE, _BODY_AREA, _BODY_D, _BODY_EMITTANCE, _HEAT_T0, _HEAT_DT, _CROSS_SECTION,
 _FLOW_LENGTH) = range(34)
N_PRM = 34
#: Per-plane parameters, columns of ``Packed.planes`` (one row per plane).
(_AREA, _COS_TILT, _PERIMETER, _F_SKY, _F_GROUND, _C_COVER, _C_DECK, _U_COVER_DECK, _G_DECK_FLOOR,
 _DECK_SHARE, _R_OUTER, _R_INNER) = range(12)
N_PLANE_COLS = 12
#: Integers, entries of ``Packed.ints`` (node indices; -1 for an absent node or body).
(_N_PLANES, _LAYERS, _I_LOWER, _I_UPPER, _I_FRAMING, _I_CEILING_TOP, _I_GYPSUM, _I_ENCLOSURE, _I_SENSOR,
 _PLACEMENT, _SHAPE, _N_NODES) = range(12)
N_INTS = 12

#: Convection geometry codes of a sensor body (``ints[_SHAPE]``; -1: no body).
SHAPE_CODES = {"sphere": 0, "cylinder": 1}
#: Order of :func:`air_vector`.
AIR_ORDER = ("in_lower", "in_upper", "out_lower", "house_in", "attic_to_house", "fan_flow", "fan_power",
             "fan_makeup", "fan_speed")
(_IN_LOWER, _IN_UPPER, _OUT_LOWER, _HOUSE_IN, _ATTIC_TO_HOUSE, _FAN_FLOW, _FAN_POWER, _FAN_MAKEUP,
 _FAN_SPEED) = range(9)

#: Self-heating table for a ``sensor_power`` function: sensor temperatures HEAT_T_MIN..HEAT_T_MAX [degC]
#: every HEAT_STEP [K], linear interpolation, clamped to the end values outside (a numerical choice of
#: ours). Linear interpolation errs by at most HEAT_STEP^2 / 8 max|P''| = 1.25e-5 K^2 max|P''| (standard
#: interpolation error bound): for the circuit's divider dissipation, whose curvature is of order P / (30 K)^2,
#: about 1e-8 of P, far below any effect on the sensor (pack reports the bound, ``Packed.heat_error``,
#: estimated from the table's second differences).
HEAT_T_MIN, HEAT_T_MAX, HEAT_STEP = -80.0, 160.0, 0.01

_N_FORCING_BASE = len(FORCING_BASE)
_N_BOOKS = len(BOOKS)
#: Index in :data:`FLOWS` of each book's rate.
_BOOK_FLOWS = tuple(FLOWS.index(name) for name in BOOKS)
(_Q_SOLAR, _Q_SKY, _Q_GROUND, _Q_EXTERIOR, _Q_COVER_DECK, _Q_DECK_UPPER, _Q_DECK_LOWER, _Q_DECK_FLOOR,
 _Q_FRAMING_UPPER, _Q_FRAMING_LOWER, _Q_CEILING_AIR, _Q_VENT_LOWER, _Q_VENT_UPPER, _Q_VENT, _Q_LAYER_EXCHANGE,
 _Q_INSULATION, _Q_CEILING_GAIN, _Q_SENSOR, _Q_FAN_ELECTRIC, _Q_HOUSE_SENSIBLE, _Q_HOUSE_LATENT, _Q_SELF_HEATING,
 _Q_TRIAC, _Q_ENCLOSURE_AIR, _Q_LOCAL_AIR, _Q_LOCAL_SPEED) = range(N_FLOWS)
assert FORCING_BASE == ("temp_out", "temp_sky_k", "wind_speed", "temp_dew", "pressure", "temp_room"), \
    "the kernel reads the forcing in this order"
_U_T_OUT, _U_T_SKY_K, _U_WIND, _U_T_DEW, _U_PRESSURE, _U_T_ROOM = range(len(FORCING_BASE))

#: Defaults the network relies on, read from their single source.
_WINDWARD = inspect.signature(heat_transfer.forced_convection_sparrow).parameters["windward_factor"].default
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
    if network.placement not in PLACEMENTS:
        raise ValueError(f"sensor placement {network.placement!r} is not one of {', '.join(PLACEMENTS)}")
    P = network.n_planes
    area = np.asarray(network.area, dtype=float).reshape(P)
    planes = np.zeros((P, N_PLANE_COLS))
    planes[:, _AREA] = area
    for col, value in ((_COS_TILT, network.cos_tilt), (_PERIMETER, network.perimeter), (_F_SKY, network.f_sky),
                       (_F_GROUND, network.f_ground), (_C_COVER, network.c_cover), (_C_DECK, network.c_deck),
                       (_U_COVER_DECK, network.u_cover_deck), (_G_DECK_FLOOR, network.g_deck_floor),
                       (_R_OUTER, network.r_outer), (_R_INNER, network.r_inner)):
        planes[:, col] = np.broadcast_to(np.asarray(value, dtype=float).reshape(-1), (P,))
    planes[:, _DECK_SHARE] = area / area.sum()  # the sensor's area-weighted deck temperature, as flows()

    prm = np.zeros(N_PRM)
    prm[_ABSORPTANCE], prm[_EMITTANCE], prm[_ROUGHNESS] = network.absorptance, network.emittance, network.roughness
    prm[_FLOOR_AREA], prm[_C_AIR] = network.floor_area, network.c_air
    prm[_W_UP], prm[_F_UP], prm[_F_UP_FRAMING] = network.w_up, network.f_up, network.f_up_framing
    prm[_CROSS_SECTION], prm[_FLOW_LENGTH] = network.cross_section, network.flow_length
    prm[_LAYER_MIXING], prm[_FAN_MIXING] = network.layer_mixing, network.fan_mixing_ratio
    prm[_INTERFACE_AREA], prm[_FRAMING_AREA] = network.interface_area, network.framing_area
    prm[_C_FRAMING], prm[_C_CEILING_TOP], prm[_C_GYPSUM] = network.c_framing, network.c_ceiling_top, network.c_gypsum
    prm[_R_INSULATION], prm[_R_ROOM] = network.r_insulation, network.r_room
    prm[_ROOM_RH] = network.room_relative_humidity
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
    ints[_PLACEMENT], ints[_SHAPE], ints[_N_NODES] = PLACEMENTS[network.placement].code, shape, network.n_nodes
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
    """The air flows :func:`rhs` reads, from an AirflowState: float64[9] in :data:`AIR_ORDER`."""
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


_walton = compiled(heat_transfer.walton_natural)                    # Walton 1983, NBSIR 83-2655
_sparrow = compiled(heat_transfer.forced_convection_sparrow)         # Sparrow et al. 1979
_air_density = compiled(_moist_air.air_density)                      # ideal gas, ISO 2533 R_d
# the placements' local conditions, compiled from their records (atticsim.network.placement) in code order
_with_fan = compiled(_placement.with_fan)
(_ridge, _mid, _exhaust, _intake, _deck, _board) = (compiled(p.function, with_fan=_with_fan)
                                                    for p in PLACEMENTS.values())
assert tuple(PLACEMENTS) == ("ridge", "mid", "exhaust", "intake", "deck", "board"), "_local's branches"


_saturation = compiled(_moist_air.saturation_vapour_pressure)  # Alduchov & Eskridge (1996) eq. 21
_humidity_ratio = compiled(_moist_air.humidity_ratio, saturation_vapour_pressure=_saturation)  # ASHRAE, psychrometrics
_humidity_ratio_from_rh = compiled(_moist_air.humidity_ratio_from_rh, saturation_vapour_pressure=_saturation)


@numba.njit(cache=True, **_JIT)
def _softplus_01(x):
    """0.1 ln(1 + exp(x / 0.1)), as ``0.1 * np.logaddexp(0.0, x / 0.1)`` (numpy's branches)."""
    # smoothed onset of the buoyant overturning over ~0.1 K (numerical choice, see _air_paths)
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


@numba.njit(cache=True, **_JIT)
def _local(code, t_up, t_lo, t_deck, t_floor, t_out, t_enc, fan_speed, fan_flow, fan_area, intake_flow,
           intake_area, contact_g):
    """The sensor's local conditions by its placement code (the functions of atticsim.network.placement)."""
    args = (t_up, t_lo, t_deck, t_floor, t_out, t_enc, fan_speed, fan_flow, fan_area, intake_flow, intake_area,
            contact_g)
    if code == 0:
        return _ridge(*args)
    if code == 1:
        return _mid(*args)
    if code == 2:
        return _exhaust(*args)
    if code == 3:
        return _intake(*args)
    if code == 4:
        return _deck(*args)
    return _board(*args)


@numba.njit(cache=True, **_JIT)
def _mixed(h_natural, h_forced):
    """Mixed convection h = (h_n^3 + h_f^3)^(1/3) [W/(m2 K)] (Churchill & Usagi 1972, AIChE J. 18, 1121, with
    the exponent 3 Churchill (1977) gives for mixed convection)."""
    if h_forced <= 0.0:
        return h_natural
    return (h_natural ** 3 + h_forced ** 3) ** (1.0 / 3.0)


@numba.njit(cache=True, **_JIT)
def _mixed_slope(delta_t, h_natural, h):
    """d(h dT)/d(dT) for h = (h_n^3 + h_f^3)^(1/3), h_n = c (dT^2 + eps^2)^(1/6) (Walton; c constant on each
    side of dT = 0) and h_f independent of dT: h + h_n^3 dT^2 / (3 h^2 (dT^2 + eps^2)) [W/(m2 K)]."""
    d2 = delta_t * delta_t
    return h + h_natural ** 3 * d2 / (3.0 * h * h * (d2 + _EPS2))


@numba.njit(cache=True, **_JIT)
def _inside_forced(fan_flow, t_air, pressure, prm):
    """Forced convection on the attic's inside surfaces while the fan runs [W/(m2 K)]: the fan's flow over the
    attic's mean cross-section sets the speed V = Q / A_x along the attic's length L (a statement of the
    model: the whole section sweeps the surfaces); average flat-plate Nusselt number, laminar
    0.664 Re^(1/2) Pr^(1/3) below Re = 5e5, mixed boundary layer (0.037 Re^(4/5) - 871) Pr^(1/3) above
    (Incropera & DeWitt, eqs. 7.30 and 7.38)."""
    if fan_flow <= 0.0:
        return 0.0
    length = prm[_FLOW_LENGTH]
    p = _properties_k(t_air + KELVIN, pressure)
    re = fan_flow / prm[_CROSS_SECTION] * length / p.kinematic_viscosity
    pr3 = p.prandtl ** (1.0 / 3.0)
    nu = 0.664 * math.sqrt(re) * pr3 if re < 5e5 else (0.037 * re ** 0.8 - 871.0) * pr3
    return nu * p.conductivity / length


@numba.njit(cache=True, **_JIT)
def _outer_surface(t_node, r_half, absorbed, t_out, k_sky4, k_out4, f_sky, f_ground, emittance, h_forced,
                   cos_tilt):
    """Temperature [degC] of a roof covering's outer surface, a massless surface between the covering's
    centre (t_node, half the covering's resistance r_half [m2K/W] away) and the outdoors: absorbed sun
    [W/m2] + long-wave to sky and ground + convection + conduction from the centre = 0, solved by Newton's
    method from t_node (:data:`SURFACE_STEPS` steps)."""
    t = t_node
    for _ in range(SURFACE_STEPS):
        k = t + KELVIN
        k3 = k * k * k
        d_t = t - t_out
        h_nat = _walton(d_t, cos_tilt, True)
        f = (absorbed + emittance * SIGMA * (f_sky * (k_sky4 - k3 * k) + f_ground * (k_out4 - k3 * k))
             - (h_forced + h_nat) * d_t + (t_node - t) / r_half)
        slope = (-4.0 * emittance * SIGMA * (f_sky + f_ground) * k3 - h_forced - _mixed_slope(d_t, h_nat, h_nat)
                 - 1.0 / r_half)
        t -= f / slope
    return t


@numba.njit(cache=True, **_JIT)
def _inner_surface(t_node, r_half, cos_tilt, f_up, t_up, t_lo, g_floor, k_ct4, h_fan):
    """Temperature [degC] of a deck's underside, a massless surface between the sheathing's centre (t_node,
    half its resistance r_half [m2K/W] away) and the attic: conduction from the centre = convection to the
    upper (share f_up of the area) and lower air (Walton's natural convection mixed with the fan's forced
    convection h_fan) + long-wave to the attic floor (g_floor: the gray exchange factor per unit deck area),
    solved by Newton's method from t_node (:data:`SURFACE_STEPS` steps)."""
    t = t_node
    for _ in range(SURFACE_STEPS):
        k = t + KELVIN
        k3 = k * k * k
        d_up, d_lo = t - t_up, t - t_lo
        n_up, n_lo = _walton(d_up, cos_tilt, False), _walton(d_lo, cos_tilt, False)
        h_up, h_lo = _mixed(n_up, h_fan), _mixed(n_lo, h_fan)
        f = ((t_node - t) / r_half - f_up * h_up * d_up - (1.0 - f_up) * h_lo * d_lo
             - SIGMA * g_floor * (k3 * k - k_ct4))
        slope = (-1.0 / r_half - f_up * _mixed_slope(d_up, n_up, h_up) - (1.0 - f_up) * _mixed_slope(d_lo, n_lo, h_lo)
                 - 4.0 * SIGMA * g_floor * k3)
        t -= f / slope
    return t


@numba.njit(cache=True, **_JIT)
def _plane(p, x, u, planes, prm, n_p, t_up, t_lo, k_ct4, h_fan):
    """Heat flows of roof plane p [W] and its surface temperatures [degC]: (solar, sky, ground, exterior
    convection, cover -> deck, deck -> upper air, deck -> lower air, deck -> attic floor, outer surface,
    deck underside).

    Each layer's node sits at its centre and reaches its surfaces through half its resistance; the films act
    at the massless surfaces (a layer lumped at its centre: Incropera & DeWitt, finite-difference nodes,
    chapter 4), so the path from outdoor air to attic air crosses the whole of both layers."""
    area = planes[p, _AREA]
    cos_tilt = planes[p, _COS_TILT]
    t_cov = x[p]
    t_deck = x[n_p + p]
    t_out, t_sky_k = u[_U_T_OUT], u[_U_T_SKY_K]
    k_out = t_out + KELVIN
    k_out4 = k_out * k_out * k_out * k_out
    k_sky4 = t_sky_k * t_sky_k * t_sky_k * t_sky_k
    emittance = prm[_EMITTANCE]
    f_up = prm[_F_UP]
    f_sky, f_ground = planes[p, _F_SKY], planes[p, _F_GROUND]
    g_floor = planes[p, _G_DECK_FLOOR] / area
    # absorbed solar alpha I (common practice)
    absorbed = prm[_ABSORPTANCE] * u[_N_FORCING_BASE + p]
    # exterior convection: the sum of Sparrow's forced and Walton's natural term (Walton 1983, NBSIR 83-2655)
    h_forced = _sparrow(u[_U_WIND], planes[p, _PERIMETER], area, prm[_ROUGHNESS], _WINDWARD)
    t_so = _outer_surface(t_cov, planes[p, _R_OUTER], absorbed, t_out, k_sky4, k_out4, f_sky, f_ground,
                          emittance, h_forced, cos_tilt)
    t_si = _inner_surface(t_deck, planes[p, _R_INNER], cos_tilt, f_up, t_up, t_lo, g_floor, k_ct4, h_fan)
    k_so = t_so + KELVIN
    k_so4 = k_so * k_so * k_so * k_so
    q_solar = absorbed * area
    # long-wave to sky and ground, eps sigma A F (T^4 - T_x^4), isotropic view factors
    # (Duffie & Beckman sect. 2.15 and 3.9), ground at air temperature
    q_sky = emittance * SIGMA * area * f_sky * (k_sky4 - k_so4)
    q_ground = emittance * SIGMA * area * f_ground * (k_out4 - k_so4)
    q_ext = (h_forced + _walton(t_so - t_out, cos_tilt, True)) * area * (t_out - t_so)
    # conduction between the layers' centres, through half of each (Incropera & DeWitt, plane wall, chapter 3)
    q_cond = planes[p, _U_COVER_DECK] * area * (t_cov - t_deck)
    # deck underside -> each air layer by Walton's natural convection mixed with the fan's forced convection,
    # the area shared by the layers' share of the deck f_up
    q_up = _mixed(_walton(t_si - t_up, cos_tilt, False), h_fan) * f_up * area * (t_si - t_up)
    q_lo = _mixed(_walton(t_si - t_lo, cos_tilt, False), h_fan) * (1 - f_up) * area * (t_si - t_lo)
    # deck underside <-> attic floor, gray two-surface exchange sigma G (T1^4 - T2^4) (Incropera & DeWitt,
    # radiation exchange chapter)
    k_si = t_si + KELVIN
    q_floor = SIGMA * planes[p, _G_DECK_FLOOR] * (k_si * k_si * k_si * k_si - k_ct4)
    return q_solar, q_sky, q_ground, q_ext, q_cond, q_up, q_lo, q_floor, t_so, t_si


@numba.njit(cache=True, **_JIT)
def _mass_flows(t_lo, t_up, u, air):
    """Mass flows [kg/s] of the held volume flows, each at the present density of the air it carries
    (ideal gas at the present station pressure): (outdoor air into the lower layer, into the upper layer,
    lower-layer air out to outdoors, room air into the lower layer, lower-layer air into the house). With
    ``fan_makeup`` the fan's exhaust of upper-layer air is made up by outdoor air entering low."""
    p = u[_U_PRESSURE]
    rho_out = _air_density(u[_U_T_OUT], p)
    rho_lo = _air_density(t_lo, p)
    m_fan = air[_FAN_MAKEUP] * _air_density(t_up, p) * air[_FAN_FLOW]
    return (rho_out * air[_IN_LOWER] + m_fan, rho_out * air[_IN_UPPER], rho_lo * air[_OUT_LOWER],
            _air_density(u[_U_T_ROOM], p) * air[_HOUSE_IN], rho_lo * air[_ATTIC_TO_HOUSE])


@numba.njit(cache=True, **_JIT)
def _air_paths(t_lo, t_up, u, fan, air, prm, layers):
    """Enthalpy flows of the air paths into each layer and between them [W]: (ventilation into the lower
    layer, into the upper layer, lower -> upper exchange)."""
    t_out = u[_U_T_OUT]
    in_lower, in_upper, out_lower, house_in, attic_to_house = _mass_flows(t_lo, t_up, u, air)
    # c_p m (T_in - T_layer) for the air entering each layer (enthalpy flow, common practice)
    vent_lo = CP_AIR * (in_lower * (t_out - t_lo) + house_in * (u[_U_T_ROOM] - t_lo))
    vent_up = CP_AIR * in_upper * (t_out - t_up)
    q_mix = 0.0
    if layers == 2:
        # the net flow from the lower to the upper layer carries the lower layer's enthalpy up (or the
        # upper's down)
        f_lu = in_lower + house_in - out_lower - attic_to_house
        vent_up = vent_up + CP_AIR * max(f_lu, 0.0) * (t_lo - t_up)
        vent_lo = vent_lo + CP_AIR * max(-f_lu, 0.0) * (t_up - t_lo)
        # buoyant overturning Q = 0.055 A sqrt(g' sqrt(A)) (Epstein 1988, J. Fluid Mech. 189; from memory),
        # onset smoothed over ~0.1 K by a softplus (numerical choice, ours)
        unstable = _softplus_01(t_lo - t_up)
        a_i = prm[_INTERFACE_AREA]
        q_b = 0.055 * a_i * math.sqrt(GRAVITY * unstable / (0.5 * (t_lo + t_up) + KELVIN) * math.sqrt(a_i))
        # a stable base rate, the fan's stirring and the overturning
        q_mix_flow = prm[_LAYER_MIXING] + prm[_FAN_MIXING] * air[_FAN_FLOW] + q_b
        q_mix = _air_density(t_lo, u[_U_PRESSURE]) * CP_AIR * q_mix_flow * (t_lo - t_up)
    return vent_lo, vent_up, q_mix


@numba.njit(cache=True, **_JIT)
def _house_air(t_lo, t_up, u, air, prm):
    """Loads on the rooms of air exchanged through the ceiling [W]: (sensible c_p m dT, latent h_fg m dW)
    (ASHRAE Handbook Fundamentals, psychrometrics chapter)."""
    room_t, pressure = u[_U_T_ROOM], u[_U_PRESSURE]
    _, _, _, house_in, attic_to_house = _mass_flows(t_lo, t_up, u, air)
    q_s = CP_AIR * (house_in * (u[_U_T_OUT] - room_t) + attic_to_house * (t_lo - room_t))
    w_room = _humidity_ratio_from_rh(room_t, prm[_ROOM_RH], pressure)
    q_l = H_FG * (house_in + attic_to_house) * (_humidity_ratio(u[_U_T_DEW], pressure) - w_room)
    return q_s, q_l


@numba.njit(cache=True, **_JIT)
def _local_at(x, u, fan, air, prm, ints, t_up, t_lo, t_deck_mean, t_ct, t_enc):
    """The sensor's local conditions (t_air, speed, t_rad, t_contact, g_contact) of its placement (speeds and
    mixing weights are engineering assumptions, common practice, no source)."""
    # outdoor air entering the lower layer, at outdoor density
    intake_flow = _mass_flows(t_lo, t_up, u, air)[0] / _air_density(u[_U_T_OUT], u[_U_PRESSURE])
    return _local(ints[_PLACEMENT], t_up, t_lo, t_deck_mean, t_ct, u[0], t_enc, air[_FAN_SPEED], air[_FAN_FLOW],
                  prm[_FAN_AREA], intake_flow, prm[_INTAKE_AREA], prm[_CONTACT_G])


@numba.njit(cache=True, **_JIT)
def _sensor(x, u, fan, air, prm, ints, heat, t_up, t_lo, t_deck_mean, t_ct, t_enc):
    """The sensor: (heat from its surroundings [W], self-heating [W], local air [degC], local speed [m/s])."""
    t_s = x[ints[_I_SENSOR]]
    pressure = u[_U_PRESSURE]
    t_air, speed, t_rad, t_contact, g_contact = _local_at(x, u, fan, air, prm, ints, t_up, t_lo, t_deck_mean,
                                                          t_ct, t_enc)
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
    return q_sensor, _self_heating(t_s, fan, prm, heat), t_air, speed


@numba.njit(cache=True, **_JIT)
def _interior(x, u, fan, prm, ints, t_up, t_lo, h_fan):
    """Framing, attic floor, ceiling and control box flows [W]: (framing -> upper air, framing -> lower air,
    attic floor -> lower air, insulation top -> gypsum, ceiling gain to the rooms, triac heat, control box
    -> lower air, control box air temperature [degC])."""
    t_fr, t_ct, t_gyp = x[ints[_I_FRAMING]], x[ints[_I_CEILING_TOP]], x[ints[_I_GYPSUM]]
    f_up, a_fr, floor_area = prm[_F_UP_FRAMING], prm[_FRAMING_AREA], prm[_FLOOR_AREA]
    # framing (vertical) and attic floor (facing up) to the air: Walton's natural convection mixed with the
    # fan's forced convection
    q_fr_up = _mixed(_walton(t_fr - t_up, 0.0, True), h_fan) * f_up * a_fr * (t_fr - t_up)
    q_fr_lo = _mixed(_walton(t_fr - t_lo, 0.0, True), h_fan) * (1 - f_up) * a_fr * (t_fr - t_lo)
    q_ceiling_air = _mixed(_walton(t_ct - t_lo, 1.0, True), h_fan) * floor_area * (t_ct - t_lo)
    # ceiling: the insulation top (a surface node) to the gypsum's centre through the insulation and half the
    # gypsum, the gypsum's centre to the rooms through its other half and the room film (plane-wall conduction,
    # Incropera & DeWitt chapter 3)
    q_insulation = floor_area * (t_ct - t_gyp) / prm[_R_INSULATION]
    q_room = floor_area * (t_gyp - u[_U_T_ROOM]) / prm[_R_ROOM]
    # the triac's conduction loss heats the control box while the fan runs; the box loses to the lower air
    q_triac = fan * prm[_TRIAC_LOSS]
    i_enc = ints[_I_ENCLOSURE]
    t_enc = x[i_enc] if i_enc >= 0 else t_lo
    q_enc_air = prm[_ENCLOSURE_G] * (t_enc - t_lo) if i_enc >= 0 else 0.0
    return q_fr_up, q_fr_lo, q_ceiling_air, q_insulation, q_room, q_triac, q_enc_air, t_enc


@numba.njit(cache=True, _nrt=False, **_JIT)
def _network(x, u, fan, air, prm, planes, ints, heat, plane_out, stride, surfaces):
    """Every heat flow of the network at one state [W], in the order of :data:`FLOWS`; roof plane p's net
    gains of its cover and deck go to ``plane_out[p]`` and ``plane_out[stride + p]`` and, with ``surfaces``,
    its outer surface and deck underside temperatures to ``plane_out[2 stride + p]`` and
    ``plane_out[3 stride + p]``. The network's one source of heat flows: :func:`rhs` and :func:`flows` both
    read it."""
    n_p = ints[_N_PLANES]
    t_lo, t_up = x[ints[_I_LOWER]], x[ints[_I_UPPER]]
    t_ct = x[ints[_I_CEILING_TOP]]
    k_ct = t_ct + KELVIN
    k_ct4 = k_ct * k_ct * k_ct * k_ct
    h_fan = _inside_forced(air[_FAN_FLOW], t_up, u[_U_PRESSURE], prm)
    solar = sky = ground = ext = cond = deck_up = deck_lo = deck_floor = t_deck_mean = 0.0
    for p in range(n_p):
        q_sol, q_sky, q_gr, q_ext, q_cond, q_up, q_lo, q_fl, t_so, t_si = _plane(p, x, u, planes, prm, n_p, t_up,
                                                                                 t_lo, k_ct4, h_fan)
        plane_out[p] = q_sol + q_sky + q_gr + q_ext - q_cond
        plane_out[stride + p] = q_cond - q_up - q_lo - q_fl
        if surfaces:
            plane_out[2 * stride + p] = t_so
            plane_out[3 * stride + p] = t_si
        solar += q_sol
        sky += q_sky
        ground += q_gr
        ext += q_ext
        cond += q_cond
        deck_up += q_up
        deck_lo += q_lo
        deck_floor += q_fl
        t_deck_mean += planes[p, _DECK_SHARE] * t_si
    fr_up, fr_lo, ceiling_air, insulation, room, triac, enc_air, t_enc = _interior(x, u, fan, prm, ints, t_up, t_lo, h_fan)
    vent_lo, vent_up, mix = _air_paths(t_lo, t_up, u, fan, air, prm, ints[_LAYERS])
    house_s, house_l = _house_air(t_lo, t_up, u, air, prm)
    q_s, p_self, t_air, speed = _sensor(x, u, fan, air, prm, ints, heat, t_up, t_lo, t_deck_mean, t_ct, t_enc)
    return (solar, sky, ground, ext, cond, deck_up, deck_lo, deck_floor, fr_up, fr_lo, ceiling_air, vent_lo,
            vent_up, vent_lo + vent_up, mix, insulation, room, q_s, fan * air[_FAN_POWER], house_s, house_l,
            p_self, triac, enc_air, t_air, speed)


@numba.njit(cache=True, _nrt=False, **_JIT)
def rhs(x, u, fan, air, prm, planes, ints, heat, out):
    """Node temperature derivatives [K/s] then the books' rates [W] at one state, written into ``out``.

    Parameters
    ----------
    x : float64[n_nodes]
        Node temperatures [degC] in the network's node order.
    u : float64[6 + P]
        Forcing: :data:`FORCING_BASE` (temp_out [degC], temp_sky_k [K], wind_speed [m/s], temp_dew
        [degC], pressure [Pa], temp_room [degC]), then the plane-of-array irradiance of each plane [W/m2].
    fan : float
        Fan state, 0.0 off or 1.0 on.
    air : float64[9]
        Held air flows in :data:`AIR_ORDER` (:func:`air_vector`).
    prm, planes, ints, heat
        The network's :class:`Packed` arrays.
    out : float64[n_nodes + len(BOOKS)]
        Filled with each node's balance over its capacity (lumped capacitance), then the books' rates.
    """
    n_p = ints[_N_PLANES]
    n = ints[_N_NODES]
    q = _network(x, u, fan, air, prm, planes, ints, heat, out, n_p, False)
    for p in range(n_p):
        out[p] = out[p] / planes[p, _C_COVER]
        out[n_p + p] = out[n_p + p] / planes[p, _C_DECK]
    lower = (q[_Q_DECK_LOWER] + q[_Q_FRAMING_LOWER] + q[_Q_CEILING_AIR] + q[_Q_VENT_LOWER] - q[_Q_LAYER_EXCHANGE]
             + q[_Q_ENCLOSURE_AIR])
    upper = q[_Q_DECK_UPPER] + q[_Q_FRAMING_UPPER] + q[_Q_VENT_UPPER] + q[_Q_LAYER_EXCHANGE]
    c_air = prm[_C_AIR]
    if ints[_LAYERS] == 2:
        w_up = prm[_W_UP]
        out[ints[_I_LOWER]] = lower / (c_air * (1.0 - w_up))
        out[ints[_I_UPPER]] = upper / (c_air * w_up)
    else:
        out[ints[_I_LOWER]] = (lower + upper) / c_air
    out[ints[_I_FRAMING]] = -(q[_Q_FRAMING_UPPER] + q[_Q_FRAMING_LOWER]) / prm[_C_FRAMING]
    out[ints[_I_CEILING_TOP]] = (q[_Q_DECK_FLOOR] - q[_Q_CEILING_AIR] - q[_Q_INSULATION]) / prm[_C_CEILING_TOP]
    out[ints[_I_GYPSUM]] = (q[_Q_INSULATION] - q[_Q_CEILING_GAIN]) / prm[_C_GYPSUM]
    i_enc = ints[_I_ENCLOSURE]
    if i_enc >= 0:
        out[i_enc] = (q[_Q_TRIAC] - q[_Q_ENCLOSURE_AIR]) / prm[_C_ENCLOSURE]
    out[n - 1] = (q[_Q_SENSOR] + q[_Q_SELF_HEATING]) / prm[_SENSOR_C]
    for k in range(_N_BOOKS):
        out[n + k] = q[_BOOK_FLOWS[k]]


@numba.njit(cache=True, _nrt=False, **_JIT)
def flows(x, u, fan, air, prm, planes, ints, heat, q, q_planes):
    """The named flows of :data:`FLOWS` at one state into ``q`` [W; the local air in degC, its speed in m/s],
    and each roof plane's :data:`PLANE_FLOWS` into ``q_planes`` (float64[4 P]: the covers' and the decks' net
    gains [W], the outer surfaces' and the deck undersides' temperatures [degC]). Arguments as :func:`rhs`."""
    values = _network(x, u, fan, air, prm, planes, ints, heat, q_planes, ints[_N_PLANES], True)
    for j in range(N_FLOWS):
        q[j] = values[j]


@numba.njit(cache=True, nogil=True, **_JIT)  # lets go of the GIL: blocks of columns run in threads side by side
def flows_columns(x, u, fan, air, prm, planes, ints, heat, q, q_planes):
    """:func:`flows` for each column j of x (n_nodes, m), u (n_u, m), fan (m,) and air (9, m), into q
    (N_FLOWS, m) and q_planes (4 P, m)."""
    qj = np.empty(N_FLOWS)
    pj = np.empty(q_planes.shape[0])
    for j in range(x.shape[1]):
        flows(x[:, j].copy(), u[:, j].copy(), fan[j], air[:, j].copy(), prm, planes, ints, heat, qj, pj)
        for i in range(qj.size):  # element by element: a slice assignment compiles its shape checks' messages
            q[i, j] = qj[i]
        for i in range(pj.size):
            q_planes[i, j] = pj[i]


@numba.njit(cache=True, **_JIT)
def _undersides_mean(x, u, fan, air, prm, planes, ints, j):
    """(area-weighted mean, highest) deck underside temperature [degC] in column j."""
    n_p = ints[_N_PLANES]
    t_lo, t_up = x[ints[_I_LOWER], j], x[ints[_I_UPPER], j]
    k_ct = x[ints[_I_CEILING_TOP], j] + KELVIN
    k_ct4 = k_ct * k_ct * k_ct * k_ct
    h_fan = _inside_forced(fan[j] * air[_FAN_FLOW, j], t_up, u[_U_PRESSURE, j], prm)
    mean = 0.0
    top = -math.inf
    for p in range(n_p):
        t_si = _inner_surface(x[n_p + p, j], planes[p, _R_INNER], planes[p, _COS_TILT], prm[_F_UP], t_up, t_lo,
                              planes[p, _G_DECK_FLOOR] / planes[p, _AREA], k_ct4, h_fan)
        mean += planes[p, _DECK_SHARE] * t_si
        top = max(top, t_si)
    return mean, top


@numba.njit(cache=True, **_JIT)
def local_air_columns(x, u, fan, air, prm, planes, ints, out):
    """The sensor's local air temperature [degC] for each column j of x (n_nodes, m), u, fan and air (as
    :func:`flows_columns`), into out (m,): what :func:`flows` gives as ``sensor_local_air``, alone."""
    for j in range(x.shape[1]):
        t_lo, t_up = x[ints[_I_LOWER], j], x[ints[_I_UPPER], j]
        t_deck_mean = _undersides_mean(x, u, fan, air, prm, planes, ints, j)[0]
        i_enc = ints[_I_ENCLOSURE]
        t_enc = x[i_enc, j] if i_enc >= 0 else t_lo
        out[j] = _local_at(x[:, j], u[:, j], fan[j], air[:, j], prm, ints, t_up, t_lo, t_deck_mean,
                           x[ints[_I_CEILING_TOP], j], t_enc)[0]


@numba.njit(cache=True, **_JIT)
def deck_underside_max(x, u, fan, air, prm, planes, ints, order):
    """The highest deck underside temperature [degC] over the columns of x (n_nodes, m), any plane (u, fan,
    air as :func:`flows_columns`).

    The underside lies between its sheathing's centre and the attic's air layers and floor (its balance is a
    weighted mean of them with positive weights), so it never exceeds the highest of those; ``order`` lists
    the columns by that bound, highest first, and the search stops where the bound falls below the best
    underside found (exact, and it solves only a few columns)."""
    n_p = ints[_N_PLANES]
    best = -math.inf
    for j in order:
        bound = max(x[ints[_I_LOWER], j], x[ints[_I_UPPER], j], x[ints[_I_CEILING_TOP], j])
        for p in range(n_p):
            bound = max(bound, x[n_p + p, j])
        if bound < best:
            break
        best = max(best, _undersides_mean(x, u, fan, air, prm, planes, ints, j)[1])
    return best


@numba.njit(cache=True, **_JIT)
def rhs_columns(x, u, fan, air, prm, planes, ints, heat, out):
    """:func:`rhs` for each column j of x (n_nodes, m), u (n_u, m), fan (m,) and air (9, m), into out
    (n_out, m)."""
    oj = np.empty(out.shape[0])
    for j in range(x.shape[1]):
        rhs(x[:, j].copy(), u[:, j].copy(), fan[j], air[:, j].copy(), prm, planes, ints, heat, oj)
        for i in range(oj.size):
            out[i, j] = oj[i]


jitcache.restore()
