//! Closed sets of names: the macro that defines an enum whose variants are written as fixed
//! text in the database, CSV files and the command line, with its parsing and display. It
//! knows nothing of what the names mean.

/// Defines a closed set of names that are written as text in the database and in CSV.
macro_rules! text_enum {
    ($(#[$doc:meta])* $name:ident { $($variant:ident = $text:literal),+ $(,)? }) => {
        $(#[$doc])*
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, ::serde::Serialize, ::serde::Deserialize)]
        pub enum $name { $(#[serde(rename = $text)] $variant),+ }

        impl $name {
            pub const ALL: &'static [$name] = &[$($name::$variant),+];
            /// The name used in files, the database and the command line.
            pub fn as_str(self) -> &'static str {
                match self { $($name::$variant => $text),+ }
            }
            /// The names accepted, for error messages.
            pub fn expected() -> String {
                [$($text),+].join("|")
            }
        }

        impl std::fmt::Display for $name {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str(self.as_str())
            }
        }

        impl std::str::FromStr for $name {
            type Err = String;
            fn from_str(s: &str) -> Result<Self, String> {
                match s.trim() {
                    $($text => Ok($name::$variant),)+
                    other => Err(format!("`{other}` is not one of {}", Self::expected())),
                }
            }
        }
    };
}

pub(crate) use text_enum;
