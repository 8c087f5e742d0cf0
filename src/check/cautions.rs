//! The cautions at the end of every check: the usual ones, and those the
//! show calls for (a staff's reach, a strip's current, the peak tension).
//! They defer to venue rules, local codes and the makers' data sheets.

use super::reach::CLEAR_MARGIN_M;
use super::report::PropFigures;
use crate::model::{PropKind, Show};

/// The cautions for `show`, whose props' figures are `props`.
pub(crate) fn cautions(show: &Show, props: &[PropFigures]) -> Vec<String> {
    let mut out = vec![format!(
        "Spinning props hit people: keep clear space around them, at least the rectangle above, \
         which adds a {CLEAR_MARGIN_M} m margin (this project's own choice, not a standard) to the space the props sweep, \
         and follow the venue's rules on distances to the audience."
    )];
    let worst = props
        .iter()
        .filter(|p| p.kind == "poi")
        .max_by(|a, b| a.max_tension_n.total_cmp(&b.max_tension_n));
    if let Some(p) = worst {
        out.push(format!(
            "The tether of {} pulls with up to {:.1} N: use tethers, handles, swivels and connectors rated well above that \
             (several times the peak), and check them for wear before each show.",
            p.name, p.max_tension_n
        ));
    }
    for (prop, p) in show.props.iter().zip(props) {
        if prop.kind == PropKind::Staff {
            out.push(format!(
                "{} is a staff: it reaches {:.2} m from the centre of its hand's path and is heavier than a poi; \
                 give it more room than a poi, and mind the end behind the hand.",
                prop.name, p.reach_m
            ));
        }
        if prop.leds > 1
            && let Some(a) = p.peak_current_a
        {
            out.push(format!(
                "{} has {} LEDs drawing up to {a:.2} A: size its battery, wiring, connectors and any fuse for that current \
                 with margin, from the LED and battery makers' data sheets.",
                prop.name, prop.leds
            ));
        }
    }
    out.extend(
        [
            "Flashing light can trigger seizures in people with photosensitive epilepsy. Warn audiences beforehand, \
             and avoid flashing between about 3 and 60 times a second near them (a range recalled from memory of \
             photosensitivity guidance, not checked against its source here).",
            "The flash counts apply the W3C WCAG 2.x general and red flash thresholds, which were written for screens; \
             for props they are a conservative guide, not a certification.",
            "LEDs, their drivers and batteries get hot when bright: do not wrap or cover them, let them cool between runs, \
             and stop using a prop whose battery swells, smells or gets hot.",
            "Lithium batteries burn: charge, carry and store them as their maker says, never charge them unattended, \
             and retire a damaged one.",
            "These figures come from a model: venue rules, local codes and the LED and battery makers' data sheets take precedence.",
        ]
        .map(String::from),
    );
    out
}
