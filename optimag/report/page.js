/* optimag run report: the page's own script.
 *
 * Figures arrive as plain JSON ({data, layout}) in <script type="application/json">
 * blocks and are drawn by plotly.js only when their slot comes near the view
 * (IntersectionObserver), so the page is ready as soon as the first screen is drawn.
 * Nothing here fetches anything; every user string reaches the page through
 * textContent or through plotly's escaped text, never through innerHTML.
 */
(function () {
  "use strict";

  function readJson(id) {
    var node = document.getElementById(id);
    return node ? JSON.parse(node.textContent) : null;
  }

  var store = readJson("optimag-figures") || { config: {}, figures: [] };
  var config = store.config;
  var pending = 0;

  function markReady() {
    if (pending === 0 && !document.documentElement.hasAttribute("data-ready")) {
      document.documentElement.setAttribute("data-ready", String(Math.round(performance.now())));
    }
  }

  /* Draw a figure dict into a slot (once). Returns plotly's promise. */
  function draw(slot, figure) {
    if (slot.getAttribute("data-drawn")) {
      return Promise.resolve(slot);
    }
    slot.setAttribute("data-drawn", "1");
    pending += 1;
    // plotly.js may keep references into the dict: give it its own copy.
    var copy = JSON.parse(JSON.stringify(figure));
    return Plotly.newPlot(slot, copy.data, copy.layout, config).then(function (div) {
      pending -= 1;
      return div;
    }, function (error) {
      pending -= 1;
      throw error;
    });
  }

  var sources = {
    page: function (index) { return store.figures[index]; },
  };

  /* Figure builders a slot can name with data-source (the page's own embedded figures,
   * or a figure built on demand from a design's record). */
  function figureFor(slot) {
    var source = sources[slot.getAttribute("data-source") || "page"];
    return source(slot.getAttribute("data-figure"), slot);
  }

  var observer = null;
  var first = true;
  function onSight(entries) {
    var drawing = [];
    entries.forEach(function (entry) {
      if (entry.isIntersecting) {
        observer.unobserve(entry.target);
        drawing.push(draw(entry.target, figureFor(entry.target)));
      }
    });
    if (first) {
      first = false;
      Promise.all(drawing).then(markReady, markReady);
    }
  }

  function watch(root) {
    var slots = (root || document).querySelectorAll("div.lazy-figure:not([data-drawn])");
    for (var i = 0; i < slots.length; i += 1) {
      if (observer) {
        observer.observe(slots[i]);
      } else {
        draw(slots[i], figureFor(slots[i]));
      }
    }
  }

  if ("IntersectionObserver" in window) {
    observer = new IntersectionObserver(onSight, { rootMargin: "100px 0px" });
  }
  window.optimagReport = { draw: draw, watch: watch, sources: sources, readJson: readJson };
  watch(document);
  if (!observer || document.querySelectorAll("div.lazy-figure").length === 0) {
    first = false;
    markReady();
  }
})();
