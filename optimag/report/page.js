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
  var LOSS_COLOURS = store.loss_colours || [];
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

  /* ---- small DOM helpers (text only: user strings never become markup) --------- */

  function element(tag, text, className) {
    var node = document.createElement(tag);
    if (text !== undefined && text !== null) {
      node.textContent = String(text);
    }
    if (className) {
      node.className = className;
    }
    return node;
  }

  function clear(node) {
    while (node.firstChild) {
      node.removeChild(node.firstChild);
    }
  }

  /* plotly.js draws text as a small HTML dialect: user strings go in escaped. */
  function plotText(value) {
    return String(value).replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;");
  }

  function format(value, digits) {
    if (value === null || value === undefined || !isFinite(value)) {
      return "—";
    }
    return Number(value).toFixed(digits);
  }

  var designs = readJson("optimag-designs");
  var byId = {};
  if (designs) {
    designs.designs.forEach(function (row) { byId[row.id] = row; });
  }
  function field(row, name) {
    return row.values[designs.fields.indexOf(name)];
  }

  /* ---- side by side ----------------------------------------------------------- */

  var picked = [];
  var MAX_PICKED = 4;

  function comparisonRows() {
    var rows = [["Figure"].concat(picked)];
    designs.fields.forEach(function (name, f) {
      rows.push([designs.headers[f]].concat(picked.map(function (id) {
        return byId[id].shown[f];
      })));
    });
    return rows;
  }

  function drawComparison() {
    var table = document.getElementById("compare-table");
    var charts = document.getElementById("compare-charts");
    var chips = document.getElementById("compare-chips");
    if (!table) {
      return;
    }
    clear(table);
    clear(charts);
    clear(chips);
    picked.forEach(function (id) {
      var chip = element("button", id + " ×", "chip");
      chip.type = "button";
      chip.setAttribute("data-design", id);
      chip.title = "take out of the comparison";
      chips.appendChild(chip);
    });
    if (picked.length < 2) {
      table.appendChild(element("p", "Pick " + (2 - picked.length) +
        " more design(s): from the list above, or with Compare on a build sheet.", "note"));
      return;
    }
    var grid = element("table", null, "data compare");
    var head = element("tr");
    head.appendChild(element("th", "Figure"));
    picked.forEach(function (id) {
      var th = element("th", id);
      th.setAttribute("data-design", id);
      head.appendChild(th);
    });
    var thead = element("thead");
    thead.appendChild(head);
    grid.appendChild(thead);
    var body = element("tbody");
    designs.fields.forEach(function (name, f) {
      var tr = element("tr");
      tr.appendChild(element("td", designs.headers[f]));
      var values = picked.map(function (id) { return byId[id].values[f]; });
      var shown = picked.map(function (id) { return byId[id].shown[f]; });
      var better = designs.better[f];
      var numbers = values.filter(function (v) { return typeof v === "number"; });
      var best = null;
      if (better && numbers.length === values.length) {
        best = better === "min" ? Math.min.apply(null, numbers) : Math.max.apply(null, numbers);
      }
      var differs = shown.some(function (v) { return v !== shown[0]; });
      shown.forEach(function (text, i) {
        var td = element("td", text, typeof values[i] === "number" ? "num" : "");
        if (differs) {
          td.classList.add("differs");
        }
        if (best !== null && differs && values[i] === best) {
          td.classList.add("best");
        }
        tr.appendChild(td);
      });
      body.appendChild(tr);
    });
    grid.appendChild(body);
    var scroll = element("div", null, "scroll");
    scroll.appendChild(grid);
    table.appendChild(scroll);
    designs.points.forEach(function (point, p) {
      var wrapper = element("div", null, "compare-chart");
      wrapper.appendChild(element("div", "At " + point, "note"));
      var slot = element("div");
      slot.style.height = "300px";
      wrapper.appendChild(slot);
      charts.appendChild(wrapper);
      var traces = designs.parts.map(function (part, k) {
        return {
          type: "bar", name: part, x: picked.map(plotText),
          y: picked.map(function (id) {
            var losses = byId[id].losses[p];
            return losses ? losses[k] : null;
          }),
          marker: { color: LOSS_COLOURS[k] },
          hovertemplate: part + ": %{y:.3f} W<extra></extra>",
        };
      });
      var layout = {
        barmode: "stack", height: 300, margin: { l: 56, r: 12, t: 36, b: 40 },
        yaxis: { title: { text: "loss [W]" } },
        xaxis: { type: "category" },
        paper_bgcolor: "#fffdf8", plot_bgcolor: "#fbf8f1",
        legend: { orientation: "h", y: -0.2 },
      };
      // The point's name is user text: plotly draws a title as markup, so it stands
      // above the chart as DOM text instead.
      Plotly.newPlot(slot, traces, layout, config);
    });
  }

  function pick(id) {
    if (!byId[id] || picked.indexOf(id) >= 0) {
      return;
    }
    if (picked.length >= MAX_PICKED) {
      picked.shift();
    }
    picked.push(id);
    drawComparison();
  }

  function unpick(id) {
    picked = picked.filter(function (p) { return p !== id; });
    drawComparison();
  }

  function csvText() {
    return comparisonRows().map(function (row) {
      return row.map(function (cell) {
        var text = String(neutraliseCell(String(cell)));
        return /[",\n\r]/.test(text) ? '"' + text.replace(/"/g, '""') + '"' : text;
      }).join(",");
    }).join("\r\n") + "\r\n";
  }

  function exportCsv() {
    if (picked.length < 2) {
      return;
    }
    var blob = new Blob([csvText()], { type: "text/csv;charset=utf-8" });
    var link = element("a");
    link.href = URL.createObjectURL(blob);
    link.download = "compared-designs.csv";
    document.body.appendChild(link);
    link.click();
    link.remove();
  }

  function setUpComparison() {
    var select = document.getElementById("compare-pick");
    if (!select || !designs) {
      return;
    }
    designs.designs.forEach(function (row) {
      var label = row.id + " — " + row.shown[0] + ", " + row.shown[1] +
        (row.kind === "reference" ? " (reference)" : row.shortlisted ? " (short-listed)" : "");
      var option = element("option", label);
      option.value = row.id;
      select.appendChild(option);
    });
    document.getElementById("compare-add").addEventListener("click", function () {
      pick(select.value);
    });
    document.getElementById("compare-clear").addEventListener("click", function () {
      picked = [];
      drawComparison();
    });
    document.getElementById("compare-csv").addEventListener("click", exportCsv);
    drawComparison();
  }

  document.addEventListener("click", function (event) {
    var target = event.target;
    if (!target.closest) {
      return;
    }
    var add = target.closest("button.compare-add");
    if (add) {
      pick(add.getAttribute("data-design"));
      var card = document.getElementById("compare");
      if (card) {
        card.scrollIntoView({ block: "start" });
      }
      return;
    }
    var chip = target.closest("#compare-chips button.chip");
    if (chip) {
      unpick(chip.getAttribute("data-design"));
    }
  });

  /* ---- cost over the product's life -------------------------------------------- */

  function lifetimeRanking(price, hours) {
    return designs.designs.filter(function (row) { return row.kind === "front"; })
      .map(function (row) {
        var energy = field(row, "weighted_loss_W") * hours / 1000 * price;
        return { id: row.id, part: field(row, "cost"), energy: energy,
          total: field(row, "cost") + energy, loss: field(row, "weighted_loss_W") };
      })
      .sort(function (a, b) { return a.total - b.total || (a.id < b.id ? -1 : 1); });
  }

  function drawLifetime() {
    var priceInput = document.getElementById("energy-price");
    var hoursInput = document.getElementById("operating-hours");
    var holder = document.getElementById("lifetime-table");
    var price = Number(priceInput.value);
    var hours = Math.max(0, Number(hoursInput.value) || 0);
    document.getElementById("energy-price-shown").textContent =
      format(price, 3) + " " + designs.currency + "/kWh";
    var ranking = lifetimeRanking(price, hours);
    clear(holder);
    var table = element("table", null, "data");
    var head = element("tr");
    ["#", "Design", "Weighted loss [W]", "Part cost", "Energy cost", "Lifetime cost", ""]
      .forEach(function (h) { head.appendChild(element("th", h)); });
    var thead = element("thead");
    thead.appendChild(head);
    table.appendChild(thead);
    var body = element("tbody");
    ranking.slice(0, 10).forEach(function (row, i) {
      var tr = element("tr", null, "pick");
      tr.setAttribute("data-design", row.id);
      [String(i + 1), row.id, format(row.loss, 3), format(row.part, 2), format(row.energy, 2),
        format(row.total, 2)].forEach(function (text, k) {
        tr.appendChild(element("td", text, k === 1 ? "" : "num"));
      });
      var mark = element("td");
      if (i === 0) {
        mark.appendChild(element("span", "cheapest over the life", "badge knee"));
        tr.classList.add("cheapest");
      }
      tr.appendChild(mark);
      body.appendChild(tr);
    });
    table.appendChild(body);
    var scroll = element("div", null, "scroll");
    scroll.appendChild(table);
    holder.appendChild(scroll);
    holder.setAttribute("data-cheapest", ranking.length ? ranking[0].id : "");
  }

  function setUpLifetime() {
    var priceInput = document.getElementById("energy-price");
    if (!priceInput || !designs) {
      return;
    }
    priceInput.addEventListener("input", drawLifetime);
    document.getElementById("operating-hours").addEventListener("input", drawLifetime);
    drawLifetime();
  }

  /* ---- what-if limits ------------------------------------------------------------ */

  var whatif = readJson("optimag-whatif");
  var whatifState = null;

  /* Rows within every limit and objective bound, and the exact front among them:
   * visited in lexicographic order of the objectives, a row joins the front unless an
   * earlier front member dominates it (no later row can dominate an earlier one). */
  function whatIfFront(bounds) {
    var cols = whatif.columns;
    var names = whatif.objective_columns;
    var count = whatif.label.length;
    var inside = [];
    for (var i = 0; i < count; i += 1) {
      var ok = true;
      for (var name in bounds) {
        if (bounds[name] !== null && !(cols[name][i] <= bounds[name])) {
          ok = false;
          break;
        }
      }
      if (ok) {
        inside.push(i);
      }
    }
    inside.sort(function (a, b) {
      for (var k = 0; k < names.length; k += 1) {
        var d = cols[names[k]][a] - cols[names[k]][b];
        if (d !== 0) {
          return d;
        }
      }
      return a - b;
    });
    var front = [];
    inside.forEach(function (row) {
      var dominated = front.some(function (member) {
        var better = false;
        for (var k = 0; k < names.length; k += 1) {
          var a = cols[names[k]][member];
          var b = cols[names[k]][row];
          if (a > b) {
            return false;
          }
          if (a < b) {
            better = true;
          }
        }
        return better;
      });
      if (!dominated) {
        front.push(row);
      }
    });
    return { inside: inside, front: front.sort(function (a, b) { return a - b; }) };
  }

  function currentBounds() {
    var bounds = {};
    var inputs = document.querySelectorAll("#whatif-sliders input[type=range]");
    for (var i = 0; i < inputs.length; i += 1) {
      var input = inputs[i];
      var open = input.getAttribute("data-open") === "1" &&
        Number(input.value) >= Number(input.max);
      bounds[input.getAttribute("data-column")] = open ? null : Number(input.value);
    }
    return bounds;
  }

  function drawWhatIf() {
    var bounds = currentBounds();
    var result = whatIfFront(bounds);
    whatifState = { bounds: bounds, inside: result.inside, front: result.front };
    var inputs = document.querySelectorAll("#whatif-sliders input[type=range]");
    for (var i = 0; i < inputs.length; i += 1) {
      var shown = document.getElementById(inputs[i].id + "-shown");
      var value = bounds[inputs[i].getAttribute("data-column")];
      shown.textContent = value === null ? "no limit" : "≤ " + Number(value).toPrecision(4);
    }
    var status = document.getElementById("whatif-status");
    status.textContent = result.inside.length + " of " + whatif.label.length +
      " held designs within these bounds; " + result.front.length + " on their front.";
    var warning = document.getElementById("whatif-warning");
    clear(warning);
    var relaxed = whatif.limits.filter(function (limit) {
      var value = bounds[limit.column];
      return limit.study !== null && (value === null || value > limit.study);
    });
    var deepest = whatif.layers === null ? null : whatif.layers - 1;
    var reachesDeepest = deepest !== null && result.front.some(function (row) {
      return whatif.layer[row] >= deepest;
    });
    if (relaxed.length || reachesDeepest) {
      var box = element("div", null, "alert");
      if (relaxed.length) {
        var keys = relaxed.map(function (limit) {
          var value = bounds[limit.column];
          return limit.key + " = " + (value === null ? "(remove it)" : Number(value).toPrecision(4));
        });
        box.appendChild(element("p", "A relaxed limit would admit designs this page does " +
          "not hold (the run kept only those within the study's limits). To see them, set " +
          "[limits] " + keys.join(", ") + " in " + whatif.study_file + " and run:"));
      } else {
        box.appendChild(element("p", "This front reaches the deepest layer the page holds: " +
          "designs beyond it may belong on it too. For the exact front, set these limits in " +
          whatif.study_file + " and run:"));
      }
      box.appendChild(element("code", "optimag explore " + whatif.study_file));
      warning.appendChild(box);
    }
    var cols = whatif.columns;
    var x = whatif.objective_columns[0];
    var y = whatif.objective_columns[1] || whatif.objective_columns[0];
    var isFront = {};
    result.front.forEach(function (row) { isFront[row] = true; });
    var isInside = {};
    result.inside.forEach(function (row) { isInside[row] = true; });
    function pointsOf(test) {
      var xs = [];
      var ys = [];
      var text = [];
      for (var i = 0; i < whatif.label.length; i += 1) {
        if (test(i)) {
          xs.push(cols[x][i]);
          ys.push(cols[y][i]);
          text.push(plotText(whatif.label[i] +
            (whatif.design_id[i] ? " (" + whatif.design_id[i] + ")" : "")));
        }
      }
      return { x: xs, y: ys, text: text };
    }
    function trace(name, points, colour, size) {
      return { type: "scattergl", mode: "markers", name: name, x: points.x, y: points.y,
        text: points.text, hovertemplate: "%{text}<extra></extra>",
        marker: { color: colour, size: size } };
    }
    var references = designs ? designs.designs.filter(function (row) {
      return row.kind === "reference";
    }) : [];
    var referenceTrace = {
      type: "scatter", mode: "markers", name: "reference design",
      x: references.map(function (row) { return field(row, x); }),
      y: references.map(function (row) { return field(row, y); }),
      text: references.map(function (row) { return plotText(row.id); }),
      hovertemplate: "%{text} (reference)<extra></extra>",
      marker: { symbol: "star", size: 14, color: "#a4452c" },
    };
    var traces = [
      trace("ruled out", pointsOf(function (i) { return !isInside[i]; }), "#d8d4cb", 4),
      trace("within the bounds", pointsOf(function (i) { return isInside[i] && !isFront[i]; }),
        "#c9b88f", 5),
      trace("front under these bounds", pointsOf(function (i) { return isFront[i]; }),
        "#1f6f78", 9),
    ];
    if (references.length) {
      traces.push(referenceTrace);
    }
    var layout = {
      height: 440, margin: { l: 60, r: 16, t: 16, b: 50 },
      paper_bgcolor: "#fffdf8", plot_bgcolor: "#fbf8f1",
      xaxis: { title: { text: whatif.titles[0] } },
      yaxis: { title: { text: whatif.titles[1] || whatif.titles[0] } },
      legend: { orientation: "h", y: -0.18 },
    };
    var plot = document.getElementById("whatif-plot");
    plot.setAttribute("data-front", result.front.join(","));
    Plotly.react(plot, traces, layout, config);
  }

  function slider(id, column, words, low, high, value, open) {
    var label = element("label", words + " ");
    var input = element("input");
    input.type = "range";
    input.id = id;
    input.min = String(low);
    input.max = String(high);
    input.step = "any";
    input.value = String(value);
    input.setAttribute("data-column", column);
    input.setAttribute("data-open", open ? "1" : "0");
    input.addEventListener("input", drawWhatIf);
    label.appendChild(input);
    label.appendChild(element("output", "", null)).id = id + "-shown";
    return label;
  }

  function setUpWhatIf() {
    var holder = document.getElementById("whatif-sliders");
    if (!holder || !whatif) {
      return;
    }
    whatif.limits.forEach(function (limit, i) {
      var low = limit.low;
      var top = limit.study !== null ? Math.max(limit.study * 1.25, limit.high) : limit.high;
      var start = limit.study !== null ? limit.study : top;
      holder.appendChild(slider("whatif-limit-" + i, limit.column, limit.words, low, top, start,
        limit.study === null));
    });
    whatif.objective_columns.forEach(function (column, i) {
      var values = whatif.columns[column];
      var low = Math.min.apply(null, values);
      var high = Math.max.apply(null, values);
      holder.appendChild(slider("whatif-objective-" + i, column, whatif.titles[i] + " up to",
        low, high, high, true));
    });
    var observer = new IntersectionObserver(function (entries) {
      if (entries.some(function (e) { return e.isIntersecting; })) {
        observer.disconnect();
        drawWhatIf();
      }
    });
    observer.observe(document.getElementById("whatif"));
  }

  if ("IntersectionObserver" in window) {
    observer = new IntersectionObserver(onSight, { rootMargin: "100px 0px" });
  }
  window.optimagReport = {
    draw: draw, watch: watch, sources: sources, readJson: readJson, openSheet: openSheet,
    afterDraw: afterDraw, pick: pick, csvText: csvText, lifetimeRanking: lifetimeRanking,
  };
  window.optimagReport.whatIfFront = whatIfFront;
  window.optimagReport.whatIfState = function () { return whatifState; };
  window.optimagReport.drawWhatIf = drawWhatIf;
  setUpComparison();
  setUpLifetime();
  setUpWhatIf();
  watch(document);
  if (!observer || document.querySelectorAll("div.lazy-figure").length === 0) {
    first = false;
    markReady();
  }
})();
