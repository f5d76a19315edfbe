"""Material defaults for roof layers and the ceiling (one place for them).

Values are typical handbook figures; each carries its basis. Users override any field per scenario.
Fields: thickness [m], density [kg/m^3], conductivity [W/(m K)], specific_heat [J/(kg K)].
"""

MATERIALS: dict[str, dict[str, float]] = {
    # Asphalt shingles: R ~ 0.078 m2K/W (ASHRAE Handbook Fundamentals, thermal properties table,
    # "asphalt shingles", R-0.44 IP; from memory), rho ~ 1100, cp ~ 1500 (from memory).
    # A 6 mm installed thickness with k = 0.077 reproduces that R.
    "asphalt-shingle": {"thickness": 0.006, "density": 1100.0, "conductivity": 0.077,
                        "specific_heat": 1500.0},
    # Metal roofing, 0.5 mm steel: rho 7850, k 45, cp 500 (steel handbook values, from memory).
    "metal": {"thickness": 0.0005, "density": 7850.0, "conductivity": 45.0, "specific_heat": 500.0},
    # Concrete/clay tile 12 mm: rho 2000, k 1.0, cp 880 (ASHRAE thermal properties table; from memory).
    "tile": {"thickness": 0.012, "density": 2000.0, "conductivity": 1.0, "specific_heat": 880.0},
    # OSB 11 mm: rho 650, k 0.13, cp 1880 (from memory).
    "osb": {"thickness": 0.011, "density": 650.0, "conductivity": 0.13, "specific_heat": 1880.0},
    # Plywood 12.7 mm: rho 545, k 0.12, cp 1880 (from memory).
    "plywood": {"thickness": 0.0127, "density": 545.0, "conductivity": 0.12, "specific_heat": 1880.0},
    # Gypsum board 12.7 mm: rho 700, k 0.16, cp 1090 (rho 640-800, cp ~1100; from memory).
    "gypsum": {"thickness": 0.0127, "density": 700.0, "conductivity": 0.16, "specific_heat": 1090.0},
}

#: Loose-fill / batt insulation defaults: conductivity 0.04 W/mK (about R-3.6 per inch) sets the depth
#: that carries the user's R-value; density 12 kg/m3 (loose fiberglass; cellulose ~ 40); cp 840
#: (glass fibre; from memory).
INSULATION = {"conductivity": 0.04, "density": 12.0, "specific_heat": 840.0}

#: Softwood framing specific heat [J/(kg K)] (wood at ~12 % moisture ~1600-1900; from memory).
WOOD_SPECIFIC_HEAT = 1880.0

#: Roof coverings by material and finish: solar absorptance, thermal emittance and surface texture (the class
#: for wind convection, atticsim.network.heat_transfer.SURFACE_TEXTURE). Typical values, each with its basis;
#: a scenario's roof.absorptance, roof.emittance and roof.surface_texture override them. The first finish of
#: each material is its default.
COVERING_FINISHES: dict[str, dict[str, dict]] = {
    "asphalt-shingle": {
        # dark shingles reflect 0.03-0.08 of the sun (field-measured roofs, Parker, Sonne & Sherwin 2002,
        # FSEC-CR-1220-00; from memory); asphalt emits like most non-metals, ~0.9 (ASHRAE Handbook
        # Fundamentals, emittance table; from memory); mineral granules: the brick-like class
        "dark": {"absorptance": 0.92, "emittance": 0.90, "surface_texture": "granular"},
        # white shingles still reflect only ~0.25 (same study, from memory)
        "light": {"absorptance": 0.75, "emittance": 0.90, "surface_texture": "granular"},
    },
    "metal": {
        # bare galvanized steel: absorptance ~0.6, and a LOW thermal emittance, 0.05 new to ~0.25 weathered
        # (ASHRAE Handbook Fundamentals, emittance table; from memory): it sheds little heat to the sky
        "bare": {"absorptance": 0.60, "emittance": 0.25, "surface_texture": "glassy"},
        # dark paint: absorptance ~0.85, paint emits ~0.85-0.9 (from memory)
        "dark-paint": {"absorptance": 0.85, "emittance": 0.85, "surface_texture": "glassy"},
        # white paint on metal reflects ~0.65-0.7 (Parker, Sonne & Sherwin 2002; from memory)
        "white-paint": {"absorptance": 0.33, "emittance": 0.85, "surface_texture": "glassy"},
    },
    "tile": {
        # terracotta (red clay) tile reflects ~0.34 (Parker, Sonne & Sherwin 2002; from memory)
        "terracotta": {"absorptance": 0.66, "emittance": 0.90, "surface_texture": "textured"},
        # white concrete tile reflects ~0.75 (same study; from memory)
        "white": {"absorptance": 0.25, "emittance": 0.90, "surface_texture": "textured"},
        # grey (natural) concrete tile, absorptance ~0.75 (common practice, no source)
        "grey": {"absorptance": 0.75, "emittance": 0.90, "surface_texture": "textured"},
    },
}
