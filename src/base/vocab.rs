//! The observation vocabulary (documented for users in `docs/api.md`), one
//! Rust enum per enum of the API.
//!
//! Serde names are the contract's values, so the same words run through the
//! JSON API, the HTML forms, the database and the exports. Display text for
//! people comes from [`Vocab::label`], and only from there.

use serde::{Deserialize, Serialize};

/// What every vocabulary enum offers: its wire value, its label for people,
/// and the full ordered list of values (the order the pages show them in).
pub trait Vocab: Copy + Eq + Ord + std::fmt::Debug + 'static {
    /// Every value, in display order.
    const ALL: &'static [Self];
    /// The contract value (`"one_perfect"`).
    fn as_str(self) -> &'static str;
    /// Plain words for a person.
    fn label(self) -> &'static str;
    /// Position of this value in [`Vocab::ALL`], for dense likelihood tables.
    fn index(self) -> usize;
    /// Parses a contract value (case-sensitive, as the contract says).
    fn parse(s: &str) -> Option<Self> {
        Self::ALL.iter().copied().find(|v| v.as_str() == s)
    }
    /// The allowed values joined for an error message: `a, b or c`.
    fn allowed() -> String {
        let names: Vec<&str> = Self::ALL.iter().map(|v| v.as_str()).collect();
        match names.split_last() {
            Some((last, rest)) if !rest.is_empty() => format!("{} or {last}", rest.join(", ")),
            Some((last, _)) => (*last).to_string(),
            None => String::new(),
        }
    }
}

macro_rules! vocab {
    ($(#[$meta:meta])* $name:ident { $($(#[$vmeta:meta])* $variant:ident = $wire:literal : $label:literal),+ $(,)? }) => {
        $(#[$meta])*
        #[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
        pub enum $name {
            $($(#[$vmeta])* #[serde(rename = $wire)] $variant,)+
        }

        impl Vocab for $name {
            const ALL: &'static [Self] = &[$(Self::$variant),+];
            fn as_str(self) -> &'static str {
                match self { $(Self::$variant => $wire,)+ }
            }
            fn label(self) -> &'static str {
                match self { $(Self::$variant => $label,)+ }
            }
            fn index(self) -> usize {
                self as usize
            }
        }

        impl std::fmt::Display for $name {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str(self.as_str())
            }
        }
    };
}

vocab! {
    /// The best cleavage seen.
    Cleavage {
        /// Splits into thin sheets or flakes.
        OnePerfect = "one_perfect": "one perfect cleavage (thin sheets or flakes)",
        /// Two cleavage directions.
        TwoDirections = "two_directions": "two cleavage directions",
        /// Three or more directions.
        ThreeOrMore = "three_or_more": "three or more cleavage directions",
        /// Massive, fibrous or too fine-grained to see.
        NoneVisible = "none_visible": "no cleavage visible (massive, fibrous or too fine)",
    }
}

vocab! {
    /// How a thin flake or fibre behaves when bent, or a fragment under the knife.
    Tenacity {
        /// Springs back.
        Elastic = "elastic": "elastic (springs back)",
        /// Stays bent.
        Flexible = "flexible": "flexible (stays bent)",
        /// Snaps or crumbles.
        Brittle = "brittle": "brittle (snaps or crumbles)",
        /// Shaves like wax.
        Sectile = "sectile": "sectile (shaves like wax)",
    }
}

vocab! {
    /// Colour of the specimen; several may be given.
    Colour {
        /// Colourless.
        Colourless = "colourless": "colourless",
        /// White.
        White = "white": "white",
        /// Cream.
        Cream = "cream": "cream",
        /// Yellow.
        Yellow = "yellow": "yellow",
        /// Golden.
        Golden = "golden": "golden",
        /// Bronze.
        Bronze = "bronze": "bronze",
        /// Brassy.
        Brassy = "brassy": "brassy",
        /// Brown.
        Brown = "brown": "brown",
        /// Red.
        Red = "red": "red",
        /// Pink.
        Pink = "pink": "pink",
        /// Lilac.
        Lilac = "lilac": "lilac",
        /// Pale green.
        PaleGreen = "pale_green": "pale green",
        /// Green.
        Green = "green": "green",
        /// Olive.
        Olive = "olive": "olive",
        /// Dark green.
        DarkGreen = "dark_green": "dark green",
        /// Blue-green.
        BlueGreen = "blue_green": "blue-green",
        /// Grey.
        Grey = "grey": "grey",
        /// Silvery.
        Silvery = "silvery": "silvery",
        /// Black.
        Black = "black": "black",
    }
}

vocab! {
    /// Luster of a fresh cleavage face, else of a fresh broken surface.
    Luster {
        /// Glassy.
        Vitreous = "vitreous": "vitreous (glassy)",
        /// Like mother-of-pearl.
        Pearly = "pearly": "pearly",
        /// Like silk.
        Silky = "silky": "silky",
        /// Like wax.
        Waxy = "waxy": "waxy",
        /// Like oil or grease.
        Greasy = "greasy": "greasy",
        /// No shine.
        Dull = "dull": "dull (earthy)",
        /// Almost metallic.
        Submetallic = "submetallic": "submetallic",
        /// Metallic.
        Metallic = "metallic": "metallic",
    }
}

vocab! {
    /// The form the mineral takes in the specimen.
    Habit {
        /// Stacked sheets.
        Books = "books": "books (stacked sheets)",
        /// Scattered scales.
        Flakes = "flakes": "flakes (scattered scales)",
        /// Platy masses.
        Foliated = "foliated": "foliated (platy masses)",
        /// Fibres.
        Fibrous = "fibrous": "fibrous",
        /// Compact, fine-grained.
        Massive = "massive": "massive (compact, fine-grained)",
        /// Soft, powdery.
        Earthy = "earthy": "earthy (soft, powdery)",
        /// Rounded grains.
        Pellets = "pellets": "pellets (rounded grains)",
        /// Radiating clusters.
        Rosettes = "rosettes": "rosettes",
        /// Blades.
        Bladed = "bladed": "bladed",
        /// Grains.
        Granular = "granular": "granular",
        /// Well-formed single crystals.
        Crystals = "crystals": "crystals (well-formed)",
    }
}

vocab! {
    /// How the specimen feels between the fingers.
    Feel {
        /// Slippery, like soap.
        Soapy = "soapy": "soapy (slippery, like soap)",
        /// Slippery and marks the fingers.
        Greasy = "greasy": "greasy (slippery, marks the fingers)",
        /// Smooth.
        Smooth = "smooth": "smooth",
        /// Gritty.
        Gritty = "gritty": "gritty",
    }
}

vocab! {
    /// A pinch worked with a drop of water.
    WetBehaviour {
        /// Can be moulded.
        Plastic = "plastic": "plastic (can be moulded)",
        /// Swells.
        Swells = "swells": "swells",
        /// Falls apart.
        Slakes = "slakes": "slakes (falls apart)",
        /// No change.
        Unchanged = "unchanged": "unchanged",
    }
}

vocab! {
    /// Streak on an unglazed porcelain plate.
    Streak {
        /// White or colourless.
        White = "white": "white",
        /// Yellowish.
        Yellowish = "yellowish": "yellowish",
        /// Grey.
        Grey = "grey": "grey",
        /// Greenish.
        Greenish = "greenish": "greenish",
        /// Brown.
        Brown = "brown": "brown",
        /// Red-brown.
        RedBrown = "red_brown": "red-brown",
        /// Black.
        Black = "black": "black",
    }
}

vocab! {
    /// Diaphaneity of a thin flake or edge.
    Diaphaneity {
        /// Light passes, objects visible through it.
        Transparent = "transparent": "transparent",
        /// Light passes, no image.
        Translucent = "translucent": "translucent",
        /// No light passes.
        Opaque = "opaque": "opaque",
    }
}

vocab! {
    /// Where the specimen was found.
    Setting {
        /// Granite.
        Granite = "granite": "granite",
        /// Pegmatite.
        Pegmatite = "pegmatite": "pegmatite",
        /// Pelitic metamorphic rocks.
        SchistGneiss = "schist_gneiss": "schist or gneiss (pelitic metamorphic)",
        /// Low-grade metamorphic rocks, mostly mafic.
        Greenschist = "greenschist": "greenschist (low-grade, mostly mafic)",
        /// Ultramafic rocks.
        Ultramafic = "ultramafic": "ultramafic rock",
        /// Marble.
        Marble = "marble": "marble",
        /// Skarn.
        Skarn = "skarn": "skarn",
        /// Mafic volcanic rocks.
        MaficVolcanic = "mafic_volcanic": "mafic volcanic rock",
        /// Hydrothermal vein.
        HydrothermalVein = "hydrothermal_vein": "hydrothermal vein",
        /// Evaporite.
        Evaporite = "evaporite": "evaporite",
        /// Sediment or soil.
        SedimentSoil = "sediment_soil": "sediment or soil",
        /// Weathering profile.
        WeatheringProfile = "weathering_profile": "weathering profile",
    }
}

vocab! {
    /// A yes/no observation (magnet, acid), as a vocabulary so the engine
    /// scores it like any other categorical property.
    YesNo {
        /// Observed: no.
        No = "false": "no",
        /// Observed: yes.
        Yes = "true": "yes",
    }
}

impl From<bool> for YesNo {
    fn from(b: bool) -> Self {
        if b { YesNo::Yes } else { YesNo::No }
    }
}

vocab! {
    /// The groups candidates are summed into.
    Group {
        /// True micas.
        Mica = "mica": "mica",
        /// Brittle micas.
        BrittleMica = "brittle_mica": "brittle mica",
        /// Chlorite group.
        Chlorite = "chlorite": "chlorite",
        /// Talc and pyrophyllite.
        TalcPyrophyllite = "talc_pyrophyllite": "talc–pyrophyllite",
        /// Serpentine group.
        Serpentine = "serpentine": "serpentine",
        /// Clay minerals.
        Clay = "clay": "clay mineral",
        /// Other sheet silicates.
        OtherSheet = "other_sheet": "other sheet silicate",
        /// Lookalikes that are not sheet silicates.
        NotSheetSilicate = "not_sheet_silicate": "not a sheet silicate",
    }
}

vocab! {
    /// Hazards an entry can carry.
    Hazard {
        /// Asbestiform fibres.
        Asbestos = "asbestos": "asbestiform fibres",
        /// Respirable dust.
        Dust = "dust": "respirable dust",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn round_trips<T: Vocab + Serialize + for<'de> Deserialize<'de>>() {
        for (i, v) in T::ALL.iter().enumerate() {
            assert_eq!(v.index(), i, "{v:?} index");
            let json = serde_json::to_string(v).expect("serialises");
            assert_eq!(json, format!("\"{}\"", v.as_str()));
            let back: T = serde_json::from_str(&json).expect("parses");
            assert_eq!(back, *v);
            assert_eq!(T::parse(v.as_str()), Some(*v));
        }
    }

    #[test]
    fn every_vocabulary_round_trips_through_its_contract_value() {
        round_trips::<Cleavage>();
        round_trips::<Tenacity>();
        round_trips::<Colour>();
        round_trips::<Luster>();
        round_trips::<Habit>();
        round_trips::<Feel>();
        round_trips::<WetBehaviour>();
        round_trips::<Streak>();
        round_trips::<Diaphaneity>();
        round_trips::<Setting>();
        round_trips::<Group>();
        round_trips::<Hazard>();
    }

    #[test]
    fn vocabulary_sizes_match_the_contract() {
        // Counts of values listed in docs/api.md (tests/api/docs.rs checks
        // that every value is there).
        assert_eq!(Cleavage::ALL.len(), 4);
        assert_eq!(Tenacity::ALL.len(), 4);
        assert_eq!(Colour::ALL.len(), 19);
        assert_eq!(Luster::ALL.len(), 8);
        assert_eq!(Habit::ALL.len(), 11);
        assert_eq!(Feel::ALL.len(), 4);
        assert_eq!(WetBehaviour::ALL.len(), 4);
        assert_eq!(Streak::ALL.len(), 7);
        assert_eq!(Diaphaneity::ALL.len(), 3);
        assert_eq!(Setting::ALL.len(), 12);
        assert_eq!(Group::ALL.len(), 8);
    }

    #[test]
    fn values_are_case_sensitive() {
        assert_eq!(Cleavage::parse("One_Perfect"), None);
        assert_eq!(Streak::parse("red_brown"), Some(Streak::RedBrown));
    }

    #[test]
    fn allowed_lists_every_value() {
        assert_eq!(Diaphaneity::allowed(), "transparent, translucent or opaque");
    }
}
