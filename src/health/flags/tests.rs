//! Tests of the flags: episodes, grading and acknowledgements.

use super::*;

fn g(day: u32, state: State) -> Graded {
    let at: DateTime<Utc> = format!("2024-03-{day:02}T08:00:00Z").parse().unwrap();
    Graded {
        at,
        state,
        value: None,
        limit: None,
    }
}

#[test]
fn an_episode_knows_when_it_began_and_when_its_state_began() {
    use State::*;
    let pts = [
        g(1, Watch),
        g(2, Steady),
        g(3, Watch),
        g(4, Watch),
        g(5, Act),
        g(6, Act),
    ];
    let (last, since, state_since) = episode(&pts).unwrap();
    assert_eq!(last.state, Act);
    assert_eq!(since, g(3, Watch).at);
    assert_eq!(state_since, g(5, Act).at);
    assert!(episode(&[g(1, Act), g(2, Steady)]).is_none());
    assert!(episode(&[]).is_none());
    // Act then back to watch: the watch state is new again.
    let (_, since, state_since) = episode(&[g(1, Watch), g(2, Act), g(3, Watch)]).unwrap();
    assert_eq!(since, g(1, Watch).at);
    assert_eq!(state_since, g(3, Watch).at);
}

#[test]
fn kinds_read_back() {
    for k in FlagKind::ALL {
        assert_eq!(k.as_str().parse::<FlagKind>(), Ok(*k));
    }
    assert!("lost-flow".parse::<FlagKind>().is_err());
}

fn flag(state: State, state_since: &str) -> Flag {
    Flag {
        kind: FlagKind::Water,
        state,
        since: NaiveDate::from_ymd_opt(2024, 3, 1).unwrap(),
        state_since: state_since.parse().unwrap(),
        message: String::new(),
        what: String::new(),
        next_step: String::new(),
        acknowledged: false,
        acknowledgement: None,
        figure: None,
        restarted: None,
    }
}

fn ack(state: &str, at: &str) -> Acknowledgement {
    Acknowledgement {
        id: 1,
        unit_id: 1,
        kind: "water".into(),
        state: state.into(),
        by: "T. Tech".into(),
        note: "breather ordered".into(),
        at: at.parse().unwrap(),
    }
}

#[test]
fn an_acknowledgement_holds_until_the_state_changes() {
    let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
    mark_acknowledged(&mut f, &[ack("act", "2024-03-11T09:00:00Z")]);
    assert!(f[0].acknowledged);
    assert_eq!(f[0].acknowledgement.as_ref().unwrap().by, "T. Tech");
    // Seen while it was watch: the move to act is news.
    let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
    mark_acknowledged(&mut f, &[ack("watch", "2024-03-05T09:00:00Z")]);
    assert!(!f[0].acknowledged);
    // An acknowledgement of an earlier act episode does not carry over.
    let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
    mark_acknowledged(&mut f, &[ack("act", "2024-02-01T09:00:00Z")]);
    assert!(!f[0].acknowledged);
}
