//! The caution box every report carries, as markup and as plain text.

use super::page::Html;

/// The caution box every run report carries: the results are model
/// estimates from a pore network; they complement and do not replace
/// laboratory special core analysis; reserve, injectivity and
/// storage-security decisions follow local regulation and licensed
/// professional practice.
pub fn caution() -> Html {
    Html(CAUTION_HTML.to_string())
}

/// Plain-text sentences of the [`caution`] box (for other outputs).
pub const CAUTION_TEXT: [&str; 3] = [
    "These results are model estimates computed on a pore network, an idealised picture of \
     the rock's pore space; they depend on the network and on the model's assumptions.",
    "They complement, and do not replace, laboratory special core analysis on samples of the \
     rock in question.",
    "Decisions on reserves, injectivity or the security of storage must follow local \
     regulation and licensed professional practice.",
];

const CAUTION_HTML: &str = "<aside class=\"caution\" role=\"note\">\n<p class=\"caution-title\">Caution: model estimates</p>\n<ul>\n<li>These results are model estimates computed on a pore network, an idealised picture of the rock&#39;s pore space; they depend on the network and on the model&#39;s assumptions.</li>\n<li>They complement, and do not replace, laboratory special core analysis on samples of the rock in question.</li>\n<li>Decisions on reserves, injectivity or the security of storage must follow local regulation and licensed professional practice.</li>\n</ul>\n</aside>\n";
