"""Invented data for the demo lab. All names are made up."""

from decimal import Decimal as D

LAB_NAME = "Saltmarsh Thin Film Works (fictional demo lab)"
LAB_ADDRESS = "7 Heron Quay, Nowhere Bay, Imaginary County"

# username, full name, role, password (demo only; printed by the command)
STAFF = [
    ("tess", "Tess Quarrington", "technician", "demo-tess-bench"),
    ("emil", "Emil Wrenfield", "engineer", "demo-emil-plans"),
    ("rosa", "Rosa Ingleby", "reviewer", "demo-rosa-checks"),
    ("quinn", "Quinn Aldermoor", "quality manager", "demo-quinn-quality"),
    ("ada", "Ada Stoneleigh", "administrator", "demo-ada-admin"),
]

# name, code, contact
CUSTOMERS = [
    ("Pellucid Owl Imaging", "POI", "Mira Owlsworth"),
    ("Grebe Lake Lensworks", "GLL", "Tobias Grebe-Hart"),
    ("Cinder Fern Photonics", "CFP", "Lena Cinderby"),
    ("Marble Heron Instruments", "MHI", "Jasper Heronfield"),
    ("Tidewick Optical", "TWO", "Nell Tidewick"),
    ("Quartz Badger Systems", "QBS", "Ivo Badgerly"),
]
# customer users: username, full name, customer code, password
CUSTOMER_USERS = [
    ("mira", "Mira Owlsworth", "POI", "demo-mira-owl"),
    ("tobias", "Tobias Grebe-Hart", "GLL", "demo-tobias-grebe"),
]

# Generic glass types with invented names. Fused silica uses Malitson's published
# Sellmeier coefficients (J. Opt. Soc. Am. 55, 1205, 1965); the others carry n_d and V_d.
GLASSES = [
    dict(
        name="Fused silica FS-1",
        description="synthetic fused silica, generic",
        n_d=D("1.45846"),
        v_d=D("67.82"),
        sellmeier_b=[0.6961663, 0.4079426, 0.8974794],
        sellmeier_c_um2=[0.0684043**2, 0.1162414**2, 9.896161**2],
        expansion_per_k_e6=D("0.55"),
        acid_class="1",
        alkali_class="1",
        phosphate_class="1",
    ),
    dict(
        name="Borosilicate crown BC-517",
        description="borosilicate crown, generic",
        n_d=D("1.51680"),
        v_d=D("64.17"),
        expansion_per_k_e6=D("7.1"),
        acid_class="1",
        alkali_class="2",
        phosphate_class="2",
        climate_class="CR 1",
        stain_class="FR 0",
    ),
    dict(
        name="Barium crown BaC-569",
        description="barium crown, generic",
        n_d=D("1.56880"),
        v_d=D("56.00"),
        expansion_per_k_e6=D("7.6"),
        acid_class="2",
        alkali_class="1",
        phosphate_class="2",
    ),
    dict(
        name="Dense flint DF-805",
        description="dense flint, generic",
        n_d=D("1.80518"),
        v_d=D("25.36"),
        expansion_per_k_e6=D("8.9"),
        acid_class="5",
        alkali_class="3",
        phosphate_class="3",
        climate_class="CR 2",
        stain_class="FR 3",
    ),
    dict(
        name="Lanthanum crown LaC-713",
        description="lanthanum crown, generic",
        n_d=D("1.71300"),
        v_d=D("53.83"),
        expansion_per_k_e6=D("8.1"),
        acid_class="4",
        alkali_class="2",
        phosphate_class="3",
        stain_class="FR 2",
    ),
    dict(
        name="Phosphate crown PhC-525",
        description="phosphate crown, generic",
        n_d=D("1.52500"),
        v_d=D("70.20"),
        expansion_per_k_e6=D("13.5"),
        acid_class="52.3",
        alkali_class="4",
        phosphate_class="4.3",
        climate_class="CR 4",
        stain_class="FR 4",
    ),
]

COATERS = [
    ("Box coater A", "1.1 m electron-beam box coater"),
    ("Box coater B", "ion-assisted electron-beam box coater"),
    ("Sputter line C", "magnetron sputter line"),
]

# code, name, type, materials, layers, process, design wavelength, n_eff
DESIGNS = [
    (
        "SAR-550",
        "Single-layer MgF2 AR at 550 nm",
        "single_layer_ar",
        "MgF2",
        1,
        "e-beam, heated substrate",
        D("550"),
        D("1.38"),
    ),
    (
        "BBAR-4070",
        "Broadband AR 400–700 nm",
        "multilayer_ar",
        "Ta2O5/SiO2",
        6,
        "ion-assisted e-beam",
        D("550"),
        D("1.62"),
    ),
    (
        "PAL-VIS",
        "Protected aluminium mirror, visible",
        "protected_metal_mirror",
        "Al/SiO2",
        2,
        "thermal evaporation",
        D("550"),
        None,
    ),
    (
        "HR-1064",
        "Dielectric mirror at 1064 nm, 45°",
        "dielectric_mirror",
        "HfO2/SiO2",
        24,
        "ion-assisted e-beam",
        D("1064"),
        D("1.75"),
    ),
    (
        "BS-5050",
        "50/50 plate beamsplitter, 45°",
        "beamsplitter",
        "Ta2O5/SiO2",
        9,
        "magnetron sputtering",
        D("600"),
        D("1.70"),
    ),
    (
        "LP-650",
        "Long-pass edge filter 650 nm",
        "filter",
        "Nb2O5/SiO2",
        31,
        "magnetron sputtering",
        D("650"),
        D("1.85"),
    ),
]

# ident, name, kind, calibration due (days from today), in service
INSTRUMENTS = [
    ("HC-01", "Humidity chamber 1", "humidity chamber", 160, True),
    ("SF-01", "Salt fog cabinet", "salt fog cabinet", 95, True),
    ("TC-01", "Temperature chamber", "temperature chamber", 210, True),
    ("TS-01", "Thermal shock pair", "thermal shock chambers", 120, True),
    ("OV-01", "Drying oven", "oven", 300, True),
    ("AB-01", "Abrasion tester", "abrasion tester", 75, True),
    ("FG-01", "Force gauge", "force gauge", 140, True),
    ("SP-01", "Spectrophotometer 1", "spectrophotometer", -12, True),  # out of calibration
    ("SP-02", "Spectrophotometer 2", "spectrophotometer", 180, True),
    ("MS-01", "Inspection microscope", "microscope", 250, True),
    ("DL-01", "Data logger 1 (humidity chamber)", "data logger", 60, True),
    ("DL-02", "Data logger 2 (salt fog cabinet)", "data logger", 45, True),
]

# glass name, form, pieces received
STOCK = [
    ("Fused silica FS-1", "25 mm dia × 3 mm, both sides polished", 120),
    ("Borosilicate crown BC-517", "25 mm dia × 3 mm, both sides polished", 300),
    ("Barium crown BaC-569", "25 mm dia × 3 mm, both sides polished", 80),
    ("Dense flint DF-805", "25 mm dia × 3 mm, both sides polished", 80),
    ("Lanthanum crown LaC-713", "25 mm dia × 3 mm, both sides polished", 80),
    ("Phosphate crown PhC-525", "25 mm dia × 3 mm, both sides polished", 60),
]

# Callout texts as invented drawings carry them (mixed spellings on purpose).
CALLOUTS = [
    "MIL-C-48497A",
    "Coating per MIL-C-48497A, severe abrasion, salt fog",
    "Mil-C-48497a\n60-40",
    "MIL-PRF-13830B App. C\nS/D 60/40",
    "ISO 9022-12-06-1, ISO 9211-4 method 01 severity 02\nISO 2409 class 1 max",
    "MIL-M-13508C",
    "5/3x0,16; L2x0.004; E0.5\nISO 9211-4-02-02",
    "adhesion + humidity",
    "ISO 9022-40-04-0; ASTM D3359 4B min",
    "MIL C 48497 A, water solubility\nCustomer durability spec QX-77 rev B",
]

# Part-number stems per design code, invented.
PARTS = {
    "SAR-550": ("Objective lens", "L-"),
    "BBAR-4070": ("Eyepiece element", "E-"),
    "PAL-VIS": ("Fold mirror", "M-"),
    "HR-1064": ("Laser turning mirror", "HR-"),
    "BS-5050": ("Plate beamsplitter", "BS-"),
    "LP-650": ("Edge filter", "F-"),
}
