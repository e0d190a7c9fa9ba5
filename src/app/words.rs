//! The translation seam of the controllers: how a view model turns a key, its arguments,
//! an engine error or a product name into the operator's words.
//!
//! Design choice: the controllers build finished view models (rows of text) but must not
//! depend on the Fluent loader, which lives behind the `app` feature with Slint; they take a
//! `&dyn Words` instead. The app passes its Fluent texts (`i18n::Texts`); unit tests pass a
//! small dictionary ([`Dictionary`]), so what the screen says is tested without a window.

use super::session::Note;
use crate::engine;

/// Words in the operator's language.
pub trait Words {
    /// Whether `key` has a translation.
    fn has(&self, key: &str) -> bool;
    /// `key` with named arguments.
    fn get_args(&self, key: &str, args: &[(&str, String)]) -> String;
    /// An engine error in words.
    fn error(&self, e: &engine::Error) -> String;

    /// The language the words are in (its decimal mark for numbers worded outside Fluent).
    fn lang(&self) -> super::numbers::Lang {
        super::numbers::Lang::En
    }

    fn get(&self, key: &str) -> String {
        self.get_args(key, &[])
    }

    /// A [`Note`] in words: its phrases first, then the sentence that holds them.
    fn note(&self, note: &Note) -> String {
        let mut args = note.args.clone();
        for (name, phrase) in &note.parts {
            args.push((*name, self.note(phrase)));
        }
        self.get_args(&note.key, &args)
    }

    /// A chemical or product name: translated when it is a known key, else as given.
    fn name(&self, name: &str) -> String {
        if self.has(name) {
            self.get(name)
        } else {
            name.to_string()
        }
    }
}

/// A fixed dictionary of `key → text`, where `{ $name }` is replaced by argument `name`; an
/// unknown key reads as itself. For tests of view models.
#[cfg(test)]
pub struct Dictionary(pub &'static [(&'static str, &'static str)]);

#[cfg(test)]
impl Words for Dictionary {
    fn has(&self, key: &str) -> bool {
        self.0.iter().any(|(k, _)| *k == key)
    }

    fn get_args(&self, key: &str, args: &[(&str, String)]) -> String {
        let Some((_, text)) = self.0.iter().find(|(k, _)| *k == key) else {
            return key.to_string();
        };
        args.iter().fold(text.to_string(), |t, (name, value)| {
            t.replace(&format!("{{ ${name} }}"), value)
        })
    }

    fn error(&self, e: &engine::Error) -> String {
        self.get(&format!("error-{}", e.kind().code()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_note_is_worded_with_its_phrases_inside() {
        let words = Dictionary(&[
            ("log-exported", "{ $count } entries, { $span }"),
            ("log-span-all", "all days"),
            ("product-x", "Product X"),
        ]);
        let note = Note::new("log-exported")
            .arg("count", 3)
            .part("span", Note::new("log-span-all"));
        assert_eq!(words.note(&note), "3 entries, all days");
        assert_eq!(words.name("product-x"), "Product X");
        assert_eq!(words.name("NaOCl"), "NaOCl", "a name that is not a key");
    }
}
