//! One registry per choice: the macros below declare an enum whose variants
//! carry their configuration names, and derive from that single list the
//! serde names, the list of valid names (for the key table and error
//! messages), the count and the name of a value. Nothing else keeps a list
//! of names by hand.

/// A choice without parameters: `Enum::ALL`, `Enum::COUNT`, `Enum::NAMES`,
/// `value.name()` and `value.index()` (position in `ALL`).
macro_rules! named_choice {
    (
        $(#[$meta:meta])*
        $vis:vis enum $name:ident {
            $( $(#[$vmeta:meta])* $variant:ident = $tag:literal ),+ $(,)?
        }
    ) => {
        $(#[$meta])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
        $vis enum $name {
            $( $(#[$vmeta])* #[serde(rename = $tag)] $variant ),+
        }

        impl $name {
            /// Every value, in declaration order.
            pub const ALL: [$name; <[&str]>::len(&[$($tag),+])] = [$($name::$variant),+];
            /// How many values there are.
            pub const COUNT: usize = <[&str]>::len(&[$($tag),+]);
            /// The configuration names, in declaration order.
            pub const NAMES: &'static [&'static str] = &[$($tag),+];

            /// The configuration name.
            pub fn name(self) -> &'static str {
                match self {
                    $( $name::$variant => $tag ),+
                }
            }

            /// Position in [`Self::ALL`].
            pub fn index(self) -> usize {
                self as usize
            }
        }
    };
}

/// A choice whose variants may hold the parameters that belong to them
/// (internally tagged by `$tag_key`, written first as `#[tag = "..."]`, so the name and the parameters sit side
/// by side in one TOML table): `Enum::NAMES` and `value.name()`.
macro_rules! named_scheme {
    (
        #[tag = $tag_key:literal]
        $(#[$meta:meta])*
        $vis:vis enum $name:ident {
            $(
                $(#[$vmeta:meta])*
                $variant:ident = $tag:literal $({
                    $( $(#[$fmeta:meta])* $field:ident : $fty:ty ),* $(,)?
                })?
            ),+ $(,)?
        }
    ) => {
        $(#[$meta])*
        #[derive(serde::Serialize, serde::Deserialize)]
        #[serde(tag = $tag_key)]
        $vis enum $name {
            $(
                $(#[$vmeta])*
                #[serde(rename = $tag)]
                $variant $({ $( $(#[$fmeta])* $field: $fty ),* })?
            ),+
        }

        impl $name {
            /// The configuration names, in declaration order.
            pub const NAMES: &'static [&'static str] = &[$($tag),+];

            /// The configuration name.
            pub fn name(&self) -> &'static str {
                match self {
                    $( $name::$variant { .. } => $tag ),+
                }
            }
        }
    };
}
