//! `overlap report`: one self-contained, well-formed page.

use crate::util::*;

#[test]
fn html_is_self_contained_and_has_every_section() {
    let dir = tmp();
    let path = dir.path().join("r.html");
    let o = run(&["report", &scan(), "--html", path.to_str().unwrap()]);
    ok(&o);
    let text = std::fs::read_to_string(&path).unwrap();
    let doc = xml(&text);
    let ids: Vec<&str> = doc
        .descendants()
        .filter_map(|n| n.attribute("id"))
        .collect();
    for id in ["configurations", "ledger", "waiting", "mlp", "timeline"] {
        assert!(ids.contains(&id), "no section {id}: {ids:?}");
    }
    // Nothing is fetched: no scripts, links, images or remote URLs.
    for n in doc.descendants().filter(|n| n.is_element()) {
        let tag = n.tag_name().name();
        assert!(
            !["script", "link", "img", "iframe"].contains(&tag),
            "<{tag}> in the page"
        );
        for a in n.attributes() {
            assert!(
                !(a.value().contains("http") && a.name() != "xmlns"),
                "remote reference {}={}",
                a.name(),
                a.value()
            );
        }
    }
    let svgs = doc
        .descendants()
        .filter(|n| n.tag_name().name() == "svg")
        .count();
    // Ledger bars, three MLP histograms, the timeline.
    assert_eq!(svgs, 5);
    let hist = attr_of_class(&doc, "histogram", "data-series");
    assert_eq!(hist, ["blocking", "hit-under-miss", "miss-under-miss"]);
    assert_eq!(with_attr(&doc, "class", "waiting").len(), 3);
    assert!(
        text.contains("Blocking") && text.contains("MissUnderMiss"),
        "RON of each configuration"
    );
}
