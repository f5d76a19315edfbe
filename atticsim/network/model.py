"""The attic's lumped thermal network: nodes, capacities and parameters, and its flows and derivatives.

Nodes (temperatures in degC in the state vector):

- per roof plane p: ``cover_p`` (the roofing layer, at its centre) and ``deck_p`` (the sheathing, at its
  centre); each reaches its massless surfaces (the outer surface, the deck's underside, where the films act)
  through half its resistance;
- ``air_lower``, ``air_upper`` (or one well-mixed ``air`` node), ``framing`` (rafters, trusses, gables);
- ``ceiling_top`` (insulation top surface, carrying half the insulation's heat capacity) and
  ``gypsum`` (gypsum board plus the other half of the insulation);
- ``enclosure`` (the control box, with the ``board`` placement only);
- ``sensor`` (the thermistor, a small mass coupled to its local air; kept out of the building's books).

The heat flows themselves are written once, compiled, in :mod:`atticsim.network.kernel` (its module and
function docstrings give each equation and source); this module holds the parameters (a scenario gives them
through :func:`atticsim.assembly.build_network`) and evaluates the flows and derivatives over columns of
states for the reference solver and the results.

The books integrate, as extra ODE states, the heat that crosses the boundary of the building nodes
(solar, sky, ground, exterior convection, ventilation, ceiling gain to the rooms), the fan's electric
energy, and the load that air exchanged through the ceiling puts on the rooms (sensible and latent,
outside the attic's closure); the storage change plus the attic's books must close.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from atticsim.constants import P_STANDARD
from atticsim.network import kernel
from atticsim.network.kernel import ATTIC_BOOKS, BOOKS, FLOWS, FORCING_BASE, PLANE_FLOWS  # noqa: F401

#: Fields of AtticNetwork whose change leaves the packed parameters valid.
_NOT_PACKED = ("air", "_packed")


@dataclass
class AtticNetwork:
    """Parameters of the network, all SI, arrays of shape (P, 1) for per-plane values."""

    plane_names: list[str]
    area: np.ndarray
    cos_tilt: np.ndarray
    perimeter: np.ndarray
    roughness: float
    absorptance: float
    emittance: float
    f_sky: np.ndarray
    f_ground: np.ndarray
    c_cover: np.ndarray          # J/K
    c_deck: np.ndarray           # J/K
    u_cover_deck: np.ndarray     # W/(m2 K), between the covering's and the sheathing's centres
    r_outer: np.ndarray          # m2K/W, the covering's centre to its outer surface (half its resistance)
    r_inner: np.ndarray          # m2K/W, the sheathing's centre to its underside (half its resistance)
    g_deck_floor: np.ndarray     # m2 (radiative exchange factor)
    floor_area: float
    c_air: float                 # J/K, all attic air
    upper_fraction: float        # share of the air in the upper layer
    upper_deck_share: float      # share of each plane's deck facing the upper layer
    upper_framing_share: float   # share of the framing in the upper layer
    layers: int                  # 1 or 2
    layer_mixing: float          # m3/s, exchange between layers in stable stratification
    fan_mixing_ratio: float      # extra exchange while the fan runs, x fan flow
    interface_area: float        # m2, horizontal area between the layers
    cross_section: float         # m2, the attic's mean vertical section across its length (the fan's flow)
    flow_length: float           # m, the attic's length, along which the fan's flow sweeps the surfaces
    framing_area: float
    c_framing: float
    c_ceiling_top: float
    c_gypsum: float
    r_insulation: float          # m2K/W, the insulation top to the gypsum's centre (insulation + half gypsum)
    r_room: float                # m2K/W, the gypsum's centre to the rooms (half gypsum + room film)
    room_relative_humidity: float  # % in the rooms (their temperature is a forcing channel)
    airflow: object              # AirflowModel
    placement: str
    sensor_body: object          # atticsim.sensor.body.SensorBody or None
    sensor_conductance: float    # W/K to local air (without a body)
    sensor_capacity: float       # J/K
    sensor_power: object         # W, or a function (sensor temp, fan_on) -> W
    contact_conductance: float   # W/K (deck placement)
    fan_area: float              # m2
    intake_area: float           # m2
    enclosure_conductance: float = 0.0  # W/K
    c_enclosure: float = 0.0     # J/K
    triac_loss: float = 0.0      # W while the fan runs
    pressure: float = P_STANDARD
    node_names: list[str] = field(default_factory=list)
    air: object = None           # the AirflowState held by the event loop

    def __post_init__(self):
        self.index = {name: i for i, name in enumerate(self.node_names)}
        one = self.layers == 1
        self.i_lower = self.index["air" if one else "air_lower"]
        self.i_upper = self.index["air" if one else "air_upper"]
        # the upper layer's shares of the deck, the framing and the air (irrelevant with one node)
        self.f_up = 0.5 if one else self.upper_deck_share
        self.f_up_framing = 0.5 if one else self.upper_framing_share
        self.w_up = 0.0 if one else self.upper_fraction
        self.i_enclosure = self.index.get("enclosure")

    def __setattr__(self, name, value):
        if name not in _NOT_PACKED:
            self.__dict__.pop("_packed", None)  # a changed parameter: pack again when next asked
        super().__setattr__(name, value)

    @property
    def packed(self) -> kernel.Packed:
        """The parameters as the compiled network's plain arrays (:func:`atticsim.network.kernel.pack`)."""
        if "_packed" not in self.__dict__:
            self.__dict__["_packed"] = kernel.pack(self)
        return self.__dict__["_packed"]

    @property
    def n_planes(self) -> int:
        return len(self.plane_names)

    @property
    def n_nodes(self) -> int:
        return len(self.node_names)

    @property
    def capacities(self) -> np.ndarray:
        """Heat capacity of each building node [J/K] (the sensor excluded: NaN)."""
        c = np.full(self.n_nodes, np.nan)
        P = self.n_planes
        c[:P], c[P:2 * P] = self.c_cover.ravel(), self.c_deck.ravel()
        c[self.i_lower] = self.c_air * (1.0 - self.w_up)
        if self.layers == 2:
            c[self.i_upper] = self.c_air * self.w_up
        c[self.index["framing"]], c[self.index["ceiling_top"]] = self.c_framing, self.c_ceiling_top
        c[self.index["gypsum"]] = self.c_gypsum
        if self.i_enclosure is not None:
            c[self.i_enclosure] = self.c_enclosure
        return c

    def mean_air(self, temps):
        """Volume-weighted mean attic air temperature [degC]."""
        return (1.0 - self.w_up) * temps[self.i_lower] + self.w_up * temps[self.i_upper]

    def _columns(self, temps, forcing, fan_on, air):
        """The arguments of the compiled column functions: states (n, m), forcing (n_u, m), fan (m,), air
        flows (9, m) from an AirflowState or a namespace of per-column arrays (default ``self.air``)."""
        x = np.ascontiguousarray(np.atleast_2d(np.asarray(temps, dtype=float)).reshape(self.n_nodes, -1))
        m = x.shape[1]
        u = np.ascontiguousarray(np.broadcast_to(np.asarray(forcing, dtype=float).reshape(len(forcing), -1),
                                                 (len(forcing), m)))
        fan = np.ascontiguousarray(np.broadcast_to(np.asarray(fan_on, dtype=float), (m,)))
        air = self.air if air is None else air
        a = np.empty((len(kernel.AIR_ORDER), m))
        for i, name in enumerate(kernel.AIR_ORDER):
            a[i] = getattr(air, name)
        return x, u, fan, a

    def flows(self, temps, forcing, fan_on, air=None) -> dict:
        """Every heat flow of the network [W], for columns of states.

        Parameters
        ----------
        temps : numpy.ndarray
            Node temperatures [degC], shape (n_nodes, m).
        forcing : numpy.ndarray
            Forcing channels (:data:`FORCING_BASE` then one irradiance row per plane), shape (6 + P, m).
        fan_on : numpy.ndarray or bool
            Fan state, shape (m,) or one for all.
        air : AirflowState or namespace of per-column arrays, optional
            Air flows; default the state held by the event loop (``self.air``).

        Returns
        -------
        dict of numpy.ndarray
            The named flows of :data:`FLOWS`, shape (m,), and those of :data:`PLANE_FLOWS` per plane, shape
            (P, m): the cover's and the deck's net gains [W], the outer surface's and the deck underside's
            temperatures [degC].
        """
        x, u, fan, a = self._columns(temps, forcing, fan_on, air)
        pk = self.packed
        q = np.empty((kernel.N_FLOWS, x.shape[1]))
        qp = np.empty((len(PLANE_FLOWS) * self.n_planes, x.shape[1]))
        kernel.flows_columns(x, u, fan, a, pk.prm, pk.planes, pk.ints, pk.heat, q, qp)
        out = dict(zip(FLOWS, q))
        for i, name in enumerate(PLANE_FLOWS):
            out[name] = qp[i * self.n_planes:(i + 1) * self.n_planes]
        return out

    def rate(self, x, u, fan_on, air) -> np.ndarray:
        """Node temperature derivatives [K/s] then book rates [W] at one state x [degC] under forcing u, the
        fan on or off, with the held air flows ``air`` (:meth:`air_vector`)."""
        pk = self.packed
        out = np.empty(pk.n_out)
        kernel.rhs(np.ascontiguousarray(x, dtype=float), np.ascontiguousarray(u, dtype=float),
                   1.0 if fan_on else 0.0, air, pk.prm, pk.planes, pk.ints, pk.heat, out)
        return out

    @staticmethod
    def air_vector(state) -> np.ndarray:
        """An AirflowState as :meth:`rate` takes it (:func:`atticsim.network.kernel.air_vector`)."""
        return kernel.air_vector(state)

    def sensor_local_air(self, temps, forcing, fan_on, air=None) -> np.ndarray:
        """The air temperature at the sensor by its placement [degC], shape (m,) (arguments as :meth:`flows`;
        the same as ``flows(...)["sensor_local_air"]``, at a fraction of the cost)."""
        x, u, fan, a = self._columns(temps, forcing, fan_on, air)
        pk = self.packed
        out = np.empty(x.shape[1])
        kernel.local_air_columns(x, u, fan, a, pk.prm, pk.planes, pk.ints, out)
        return out

    def deck_underside_max(self, temps, forcing, fan_on, air=None) -> float:
        """The highest deck underside temperature [degC] over columns of states, any plane (arguments as
        :meth:`flows`; exact: :func:`atticsim.network.kernel.deck_underside_max`)."""
        x, u, fan, a = self._columns(temps, forcing, fan_on, air)
        P = self.n_planes
        rows = [x[self.i_lower], x[self.i_upper], x[self.index["ceiling_top"]], *x[P:2 * P]]
        order = np.argsort(-np.max(rows, axis=0), kind="stable")
        pk = self.packed
        return float(kernel.deck_underside_max(x, u, fan, a, pk.prm, pk.planes, pk.ints, order))

    def derivatives(self, temps, forcing, fan_on, air=None) -> np.ndarray:
        """Time derivatives of node temperatures [K/s] and of the books [W], shape (n_nodes + books, m)
        (arguments as :meth:`flows`)."""
        x, u, fan, a = self._columns(temps, forcing, fan_on, air)
        pk = self.packed
        out = np.empty((pk.n_out, x.shape[1]))
        kernel.rhs_columns(x, u, fan, a, pk.prm, pk.planes, pk.ints, pk.heat, out)
        return out
