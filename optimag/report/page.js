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

  /* What to do with a figure once drawn, by the role of its card (click handlers). */
  var afterDraw = [];

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
      var role = div.parentNode ? div.parentNode.getAttribute("data-role") : null;
      afterDraw.forEach(function (hook) { hook(div, role); });
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

  /* ---- every front design one click from its build sheet ---------------------- */

  function findSheet(design) {
    var sheets = document.querySelectorAll("article.sheet");
    for (var i = 0; i < sheets.length; i += 1) {
      if (sheets[i].getAttribute("data-design") === design) {
        return sheets[i];
      }
    }
    return null;
  }

  /* Show a design's build sheet: a short-listed one where it stands, any other copied in
   * from its template at the head of the build sheets. Returns the sheet or null. */
  function openSheet(design) {
    var sheet = findSheet(design);
    if (!sheet) {
      var templates = document.querySelectorAll("template.sheet-template");
      for (var i = 0; i < templates.length; i += 1) {
        if (templates[i].getAttribute("data-design") === design) {
          var holder = document.getElementById("opened-sheets");
          holder.insertBefore(templates[i].content.cloneNode(true), holder.firstChild);
          sheet = findSheet(design);
          watch(sheet);
          break;
        }
      }
    }
    if (!sheet) {
      return null;
    }
    var previous = document.querySelectorAll("article.sheet.opened");
    for (var j = 0; j < previous.length; j += 1) {
      previous[j].classList.remove("opened");
    }
    sheet.classList.add("opened");
    sheet.scrollIntoView({ block: "start" });
    return sheet;
  }

  afterDraw.push(function (div, role) {
    if (role === "pair" || role === "front-3d") {
      div.on("plotly_click", function (event) {
        var point = event && event.points && event.points[0];
        var ids = point && point.data && point.data.ids;
        if (ids && ids[point.pointNumber] !== undefined) {
          openSheet(String(ids[point.pointNumber]));
        }
      });
    }
    if (role === "parallel") {
      var line = null;
      div.on("plotly_hover", function (event) { line = event ? event.curveNumber : null; });
      div.on("plotly_unhover", function () { line = null; });
      div.addEventListener("click", function () {
        var meta = div.data && div.data[0] && div.data[0].meta;
        if (line !== null && meta && meta.designs && meta.designs[line] !== undefined) {
          openSheet(String(meta.designs[line]));
        }
      });
    }
  });

  document.addEventListener("click", function (event) {
    var row = event.target.closest ? event.target.closest("tr.pick") : null;
    if (row && !event.target.closest("input, button, a")) {
      openSheet(row.getAttribute("data-design"));
    }
  });

  if ("IntersectionObserver" in window) {
    observer = new IntersectionObserver(onSight, { rootMargin: "100px 0px" });
  }
  window.optimagReport = {
    draw: draw, watch: watch, sources: sources, readJson: readJson, openSheet: openSheet,
    afterDraw: afterDraw,
  };
  watch(document);
  if (!observer || document.querySelectorAll("div.lazy-figure").length === 0) {
    first = false;
    markReady();
  }
})();
