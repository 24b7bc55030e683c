//! Invented names and the kinds and rates of the amenity tables.

pub const WORDS_A: [&str; 40] = [
    "Alder",
    "Aspen",
    "Birch",
    "Bramble",
    "Cedar",
    "Clover",
    "Copper",
    "Driftwood",
    "Elm",
    "Fern",
    "Flint",
    "Foxglove",
    "Garnet",
    "Hazel",
    "Heron",
    "Ivy",
    "Juniper",
    "Kestrel",
    "Larch",
    "Linden",
    "Maple",
    "Marsh",
    "Moss",
    "Nettle",
    "Oak",
    "Osprey",
    "Pine",
    "Quarry",
    "Reed",
    "Rowan",
    "Sage",
    "Sorrel",
    "Spruce",
    "Tamarack",
    "Thistle",
    "Umber",
    "Vale",
    "Willow",
    "Wren",
    "Yarrow",
];
pub const WORDS_B: [&str; 20] = [
    "Bend", "Brook", "Commons", "Creek", "Crossing", "Field", "Ford", "Glen", "Grove", "Hill",
    "Hollow", "Knoll", "Landing", "Meadow", "Point", "Ridge", "Run", "Terrace", "Valley", "Wood",
];
pub const PARK_KINDS: [&str; 6] = ["Park", "Park", "Green", "Playfield", "Commons", "Preserve"];
/// Registry activities and the word the site's name ends with.
pub const ACTIVITIES: [(&str, &str, &str); 8] = [
    ("swimming pool", "Pool", "aquatic center"),
    (
        "recreation center",
        "Recreation Center",
        "recreation center",
    ),
    ("sports fields", "Sports Fields", "sports club"),
    ("tennis courts", "Tennis Courts", "racquet club"),
    ("trailhead", "Trailhead", "outdoor recreation"),
    ("skate park", "Skate Park", "recreation center"),
    ("boat launch", "Boat Launch", "outdoor recreation"),
    ("community gym", "Community Gym", "fitness center"),
];
/// Licensing categories and the word the business name ends with.
pub const CATEGORIES: [(&str, &str); 8] = [
    ("fitness center", "Fitness"),
    ("yoga studio", "Yoga"),
    ("martial arts", "Martial Arts"),
    ("climbing gym", "Climbing"),
    ("dance studio", "Dance Studio"),
    ("boxing gym", "Boxing Club"),
    ("pilates studio", "Pilates"),
    ("aquatic club", "Swim Club"),
];

/// Food store kinds with the word the store's name ends with, and their
/// shares in urban and in rural blocks. The first three are the kinds the
/// food-access definitions count; convenience stores are listed too, as
/// store lists do, so that analyses have to filter them out.
pub const STORE_KINDS: [(&str, &str, f64, f64); 4] = [
    ("supermarket", "Market", 0.42, 0.40),
    ("supercenter", "Supercenter", 0.06, 0.08),
    ("large grocery store", "Grocery", 0.20, 0.22),
    ("convenience store", "Corner Store", 0.32, 0.30),
];
/// One food store per this many residents, in urban and in rural blocks
/// (rural stores serve more people each).
pub const URBAN_RESIDENTS_PER_STORE: f64 = 3600.0;
pub const RURAL_RESIDENTS_PER_STORE: f64 = 1000.0;
/// Clinic name endings.
pub const CLINIC_ENDINGS: [&str; 4] = [
    "Health Center",
    "Family Clinic",
    "Primary Care",
    "Medical Group",
];
/// One primary-care clinic per this many residents; a block on a county
/// line gets an extra chance of one, so that catchments cross counties.
pub const RESIDENTS_PER_CLINIC: f64 = 10_000.0;
pub const COUNTY_LINE_CLINIC: f64 = 0.03;
/// Hazard site kinds, the word their names end with, their shares in
/// rural and in urban blocks, and the chance that the site is drawn as its
/// footprint (POLYGON) when the block is large enough.
pub const HAZARD_KINDS: [(&str, &str, f64, f64, f64); 5] = [
    ("chemical storage", "Chemical Storage", 0.20, 0.32, 0.0),
    ("fuel terminal", "Fuel Terminal", 0.15, 0.28, 0.0),
    ("wastewater plant", "Wastewater Plant", 0.15, 0.25, 0.0),
    ("landfill", "Landfill", 0.30, 0.03, 0.75),
    ("rail yard", "Rail Yard", 0.20, 0.12, 0.70),
];
/// One library branch per this many residents; a populated rural block
/// is a bookmobile stop with this chance.
pub const RESIDENTS_PER_BRANCH: f64 = 40_000.0;
pub const BOOKMOBILE_STOP: f64 = 0.0015;
