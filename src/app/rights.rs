//! What the signed-in person may do in the shop, in words a screen can show beside an action it
//! greys out. The server enforces the roles itself; this only tells the user beforehand. It
//! must not decide anything the server does not: where it cannot tell, it allows.

use super::shop::Shop;
use super::AppError;
use crate::store::roles::ShopRole;

/// The rights of the signed-in person, for the screens.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Rights {
    /// Who is signed in and as what, e.g. "ann — technician: read everything; …"; empty for a
    /// shop file, where whoever opens the file may do everything.
    pub who: String,
    /// Keep machines, units, fluids, baselines, limits and settings; correct, withdraw or
    /// confirm stored readings (the engineer's rights).
    pub may_configure: bool,
    /// Why not, when not.
    pub configure_why: String,
    /// Log checks, samples and events, acknowledge flags (the technician's rights).
    pub may_record: bool,
    /// Why not, when not.
    pub record_why: String,
}

impl Rights {
    /// Everything allowed: a shop file, or a server login the shop's roles do not describe
    /// (the owner, say), whose writes the server alone judges.
    fn everything(who: String) -> Rights {
        Rights {
            who,
            may_configure: true,
            configure_why: String::new(),
            may_record: true,
            record_why: String::new(),
        }
    }
}

/// The rights of the person signed in to `shop`.
pub fn rights(shop: &Shop) -> Result<Rights, AppError> {
    Ok(rights_of(shop.signed_in_roles()?))
}

/// The rights that a server login holding `roles` has (`None`: a shop file).
pub fn rights_of(signed_in: Option<(String, Vec<ShopRole>)>) -> Rights {
    let Some((login, roles)) = signed_in else {
        return Rights::everything(String::new());
    };
    if roles.is_empty() {
        return Rights::everything(format!(
            "{login} — no shop role: the server decides what you may change"
        ));
    }
    let names: Vec<&str> = roles.iter().map(|r| r.as_str()).collect();
    let mays: Vec<&str> = roles.iter().map(|r| r.may()).collect();
    let who = format!("{login} — {}: {}", names.join(" and "), mays.join("; "));
    let engineer = roles.contains(&ShopRole::Engineer);
    let recorder = engineer || roles.contains(&ShopRole::Technician);
    let role_words = names.join(" and ");
    Rights {
        who,
        may_configure: engineer,
        configure_why: if engineer {
            String::new()
        } else {
            format!(
                "Your role ({role_words}) may not change machines, units, fluids, baselines, \
                 limits, settings or stored readings: that needs the engineer role."
            )
        },
        may_record: recorder,
        record_why: if recorder {
            String::new()
        } else {
            format!(
                "Your role ({role_words}) may not log checks, samples or events: that needs the \
                 technician or engineer role."
            )
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The table of rights is the one issue 13 sets and `store::roles` grants on the server:
    // technician logs and acknowledges; engineer also configures and corrects; supervisor reads
    // and signs off.

    #[test]
    fn a_shop_file_allows_everything_and_names_no_one() {
        let r = rights_of(None);
        assert!(r.may_configure && r.may_record);
        assert!(r.who.is_empty());
    }

    #[test]
    fn a_technician_records_but_does_not_configure() {
        let r = rights_of(Some(("ann".into(), vec![ShopRole::Technician])));
        assert!(r.may_record && !r.may_configure);
        assert!(r.who.starts_with("ann — technician: "), "{}", r.who);
        assert!(
            r.configure_why.contains("engineer role"),
            "{}",
            r.configure_why
        );
        assert!(r.record_why.is_empty());
    }

    #[test]
    fn an_engineer_does_both() {
        let r = rights_of(Some(("bo".into(), vec![ShopRole::Engineer])));
        assert!(r.may_record && r.may_configure);
        assert!(r.configure_why.is_empty() && r.record_why.is_empty());
    }

    #[test]
    fn a_supervisor_reads_and_signs_off_only() {
        let r = rights_of(Some(("cy".into(), vec![ShopRole::Supervisor])));
        assert!(!r.may_record && !r.may_configure);
        assert!(r.record_why.contains("(supervisor)"), "{}", r.record_why);
    }

    #[test]
    fn a_login_without_a_shop_role_is_left_to_the_server() {
        let r = rights_of(Some(("owner".into(), vec![])));
        assert!(r.may_record && r.may_configure);
        assert!(r.who.contains("no shop role"), "{}", r.who);
    }
}
