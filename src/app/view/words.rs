//! The words of every face: states as words and marks, when work falls due, trend arrows and
//! words. Fixed texts only; nothing here reads the shop or decides a state.

use crate::health::indicators::Direction;
use crate::health::State;

/// The mark drawn beside a state (a distinct shape per state on paper and on screen, so a
/// black-and-white print or a colour-blind reader still tells them apart).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum StateMark {
    Steady,
    /// Readings or a baseline are missing, so nothing is said yet.
    NotJudged,
    Watch,
    Act,
}

/// The mark of a state.
pub fn state_mark(s: State) -> StateMark {
    match s {
        State::Steady => StateMark::Steady,
        State::NotJudged => StateMark::NotJudged,
        State::Watch => StateMark::Watch,
        State::Act => StateMark::Act,
    }
}

/// A state in words, where a mark is drawn beside it (the app, the report).
pub fn state_word(s: State) -> &'static str {
    s.as_str()
}

/// A state in words where no mark can be drawn (plain text: the command line): act in
/// capitals, so it stands out in a column of words as the mark makes it stand out elsewhere.
pub fn state_word_plain(s: State) -> &'static str {
    match s {
        State::Act => "ACT",
        other => other.as_str(),
    }
}

/// When planned work falls due, in the same words on every face: "3 days late", "1 day
/// late", "due today", "in 1 day", "in 12 days".
pub fn due_words(days_overdue: i64) -> String {
    let days = |n: i64| format!("{n} day{}", if n == 1 { "" } else { "s" });
    match days_overdue {
        d if d > 0 => format!("{} late", days(d)),
        0 => "due today".to_string(),
        d => format!("in {}", days(-d)),
    }
}

/// A due date's words with what brought it forward, where the plan did: "3 days late;
/// brought forward: water over limit".
pub fn due_words_why(days_overdue: i64, pulled_forward: Option<&str>) -> String {
    let when = due_words(days_overdue);
    match pulled_forward {
        Some(why) => format!("{when}; brought forward: {why}"),
        None => when,
    }
}

/// The arrow of a trend direction.
pub fn arrow(d: Direction) -> &'static str {
    crate::app::figures::arrow(d)
}

/// A trend direction in words.
pub fn trend_word(d: Direction) -> &'static str {
    match d {
        Direction::Rising => "rising",
        Direction::Falling => "falling",
        Direction::Flat => "no clear trend",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn due_words_count_days_in_plain_english() {
        assert_eq!(due_words(3), "3 days late");
        assert_eq!(due_words(1), "1 day late");
        assert_eq!(due_words(0), "due today");
        assert_eq!(due_words(-1), "in 1 day");
        assert_eq!(due_words(-12), "in 12 days");
        assert_eq!(
            due_words_why(2, Some("water over limit")),
            "2 days late; brought forward: water over limit"
        );
    }

    #[test]
    fn act_reads_in_capitals_only_without_a_mark() {
        assert_eq!(state_word(State::Act), "act");
        assert_eq!(state_word_plain(State::Act), "ACT");
        assert_eq!(state_word_plain(State::NotJudged), "not judged yet");
    }
}
