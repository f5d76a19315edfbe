"""The one place that turns a validated scenario into the model: the network's parameters, its airflow model
and the thermostat's controller.

Each part of the scenario is read here once: the roof's layers, optics and view factors; the attic's geometry
and air; the ceiling; the sensor's placement, body and heating; the airflow model; the controller. The
network (:mod:`atticsim.network.model`) holds the parameters, the kernel (:mod:`atticsim.network.kernel`)
their physics; the thermostat models of :mod:`atticsim.scenario.thermostat` say where they switch, how they
heat the sensor and what their triac dissipates (no kind is tested here).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from atticsim.air import air_density
from atticsim.airflow.model import AirflowModel
from atticsim.constants import CP_AIR, P_STANDARD
from atticsim.hybrid.controller import Controller
from atticsim.materials import INSULATION, WOOD_SPECIFIC_HEAT
from atticsim.network.heat_transfer import SURFACE_TEXTURE, gray_two_surface_factor, view_factors_tilted
from atticsim.network.model import AtticNetwork
from atticsim.network.placement import PLACEMENTS
from atticsim.scenario.geometry import attic_geometry

#: The triac's conduction loss when neither ``sensor.triac_loss`` nor a mains side gives it [W]: about 1 V
#: across a triac carrying a 1.5 A fan (from memory).
DEFAULT_TRIAC_LOSS = 1.5


@dataclass
class Model:
    """A scenario assembled: the network (with its airflow model) and the thermostat's controller."""

    network: AtticNetwork
    controller: Controller


def assemble(scenario, pressure: float = P_STANDARD) -> Model:
    """The model a validated scenario describes (``pressure``: the site's mean pressure [Pa], for the air's
    heat capacity and the airflow model's defaults)."""
    return Model(build_network(scenario, pressure), controller_from_scenario(scenario))


def controller_from_scenario(scenario) -> Controller:
    """The controller of the scenario's thermostat: its switch's action and points, and its time rules (the
    ``thermostat.*`` keys and a circuit's timer stage)."""
    th = scenario.thermostat
    on, off = th.switch_points()
    return Controller(th.action, on, off, th.time_rules())


def triac_loss(scenario) -> float:
    """Heat the triac puts into the control box while the fan runs [W]: ``sensor.triac_loss`` if given, else
    the thermostat's mains-side figure, else :data:`DEFAULT_TRIAC_LOSS`."""
    if scenario.sensor.triac_loss is not None:
        return scenario.sensor.triac_loss
    loss = scenario.thermostat.triac_heat()
    return DEFAULT_TRIAC_LOSS if loss is None else loss


def _layer(layer):
    """(heat capacity per area [J/(m2 K)], resistance [m2K/W]) of a layer."""
    thickness = layer.prop("thickness")
    return layer.prop("density") * layer.prop("specific_heat") * thickness, thickness / layer.prop("conductivity")


def _roof(scenario) -> dict:
    """The roof planes' parameters: areas, tilts, view factors, the layers (each node at its layer's centre:
    half its resistance to each surface), the deck's radiation to the attic floor, the optics."""
    roof, attic = scenario.roof, scenario.attic
    planes = roof.planes
    col = lambda values: np.asarray(values, dtype=float).reshape(-1, 1)  # noqa: E731
    area = col([p.area for p in planes])
    tilt = np.array([p.tilt for p in planes])
    f_sky, f_ground = view_factors_tilted(tilt)
    cap_cov, r_cov = _layer(roof.covering)
    cap_sh, r_sh = _layer(roof.sheathing)
    # each plane sees the share of the floor in proportion to its area (gray two-surface exchange)
    floor_share = attic.floor_area * area / float(area.sum())
    g = np.array([gray_two_surface_factor(fs, attic.floor_emittance, a, roof.underside_emittance)
                  for fs, a in zip(floor_share.ravel(), area.ravel())]).reshape(-1, 1)
    optics, _ = roof.optics()
    return dict(
        plane_names=[p.name for p in planes], area=area, cos_tilt=col(np.cos(np.radians(tilt))),
        perimeter=col([p.perimeter if p.perimeter else 4.0 * np.sqrt(p.area) for p in planes]),
        roughness=SURFACE_TEXTURE[optics["surface_texture"]], absorptance=optics["absorptance"],
        emittance=optics["emittance"], f_sky=col(f_sky), f_ground=col(f_ground),
        c_cover=cap_cov * area, c_deck=cap_sh * area,
        u_cover_deck=np.full_like(area, 1.0 / (0.5 * r_cov + 0.5 * r_sh)),
        r_outer=np.full_like(area, 0.5 * r_cov), r_inner=np.full_like(area, 0.5 * r_sh), g_deck_floor=g)


def _attic(scenario, pressure) -> dict:
    """The attic air (its layers' shares from the roof's shape), framing and floor, and the intakes' area."""
    attic = scenario.attic
    geometry = attic_geometry(scenario)
    openings = scenario.vents.openings
    if openings:
        layer_height = geometry.interface_height if attic.air_layers == 2 else 0.0
        intake_area = sum(o.net_free_area for o in openings if o.height < layer_height or o.kind == "soffit")
    else:
        # without described openings: the code minimum, half of 1/150 of the floor at the intakes
        # (IRC 2018 R806.2 with the usual half-high, half-low split)
        intake_area = attic.floor_area / 300.0
    return dict(
        floor_area=attic.floor_area,
        # the air's heat capacity at 35 degC (rho ~1.146 kg/m3); its small change with temperature is ignored
        c_air=float(air_density(35.0, pressure)) * CP_AIR * attic.volume,
        upper_fraction=geometry.upper_volume_share, upper_deck_share=geometry.upper_deck_share,
        upper_framing_share=geometry.upper_framing_share, layers=attic.air_layers,
        layer_mixing=attic.layer_mixing_ach * attic.volume / 3600.0, fan_mixing_ratio=attic.fan_mixing_ratio,
        interface_area=geometry.interface_area, cross_section=geometry.cross_section, flow_length=geometry.length,
        framing_area=attic.framing_area, c_framing=attic.framing_mass * WOOD_SPECIFIC_HEAT,
        intake_area=intake_area)


def _ceiling(scenario) -> dict:
    """The ceiling: insulation over gypsum (its top a surface node with half the insulation's capacity; the
    gypsum's node at its centre, reached through the insulation and half the gypsum)."""
    ceiling = scenario.ceiling
    cap_gyp, r_gyp = _layer(ceiling.gypsum)
    # the insulation's depth that carries its R-value at the default conductivity sets its mass
    cap_ins = ceiling.insulation * INSULATION["conductivity"] * ceiling.insulation_density * INSULATION["specific_heat"]
    area = scenario.attic.floor_area  # the ceiling's area is the attic floor's
    return dict(
        c_ceiling_top=0.5 * cap_ins * area, c_gypsum=(cap_gyp + 0.5 * cap_ins) * area,
        r_insulation=ceiling.insulation + 0.5 * r_gyp, r_room=ceiling.room_film + 0.5 * r_gyp,
        room_relative_humidity=scenario.house.indoor_relative_humidity)


def _sensor(scenario) -> dict:
    """The sensor: its placement (and the control box it may need), its body or first-order constants, its
    heating, the fan's opening it may sit in."""
    sensor = scenario.sensor
    box = PLACEMENTS[sensor.placement].needs_enclosure
    body = None
    if sensor.body is not None:
        from atticsim.sensor.body import preset

        body = preset(sensor.body)
    return dict(
        placement=sensor.placement, sensor_body=body, sensor_conductance=sensor.dissipation_constant,
        sensor_capacity=body.heat_capacity if body is not None else sensor.dissipation_constant * sensor.time_constant,
        sensor_power=scenario.thermostat.sensor_heating(sensor), contact_conductance=sensor.contact_conductance,
        fan_area=np.pi * scenario.fan.diameter**2 / 4.0,
        enclosure_conductance=sensor.enclosure_conductance if box else 0.0,
        c_enclosure=sensor.enclosure_capacity if box else 0.0, triac_loss=triac_loss(scenario) if box else 0.0)


def node_names(scenario) -> list[str]:
    """The network's nodes in state order: covers and decks per plane, the air layer(s), framing, insulation
    top, gypsum, the control box when the placement needs it, the sensor last."""
    planes = scenario.roof.planes
    air = ["air"] if scenario.attic.air_layers == 1 else ["air_lower", "air_upper"]
    box = ["enclosure"] if PLACEMENTS[scenario.sensor.placement].needs_enclosure else []
    return ([f"cover_{p.name}" for p in planes] + [f"deck_{p.name}" for p in planes] + air
            + ["framing", "ceiling_top", "gypsum"] + box + ["sensor"])


def build_network(scenario, pressure: float = P_STANDARD) -> AtticNetwork:
    """The network's parameters from a validated scenario (see the module docstring)."""
    return AtticNetwork(**_roof(scenario), **_attic(scenario, pressure), **_ceiling(scenario), **_sensor(scenario),
                        airflow=AirflowModel(scenario, pressure), pressure=pressure, node_names=node_names(scenario))
