// nudge what-if panel: an evaluator of a compiled output's listing (see
// sens/tape/listing.go for its form) and the panel of sliders around it.
// Written for nudge; no library, no network. The page may hold many panels
// and this script many times: it defines itself once and sets up every
// panel not yet set up.
(function (root) {
  "use strict";
  if (root && root.nudgeExplore && root.nudgeExplore.version === 1) {
    root.nudgeExplore.setupAll();
    return;
  }


  // ---- numbers as Go's math package computes them, where JavaScript's
  // Math differs in definition (not in the last bit).

  // roundHalfAway rounds half away from zero (Go's math.Round).
  function roundHalfAway(x) {
    var t = Math.trunc(x);
    if (Math.abs(x - t) >= 0.5) t += x < 0 ? -1 : 1;
    return t;
  }

  var f64 = new Float64Array(1), u32 = new Uint32Array(f64.buffer);
  var little = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;
  // frexp returns [frac, exp] with x = frac * 2^exp, 0.5 <= |frac| < 1.
  function frexp(x) {
    if (x === 0 || !isFinite(x)) return [x, 0];
    var e = 0;
    if (Math.abs(x) < 2.2250738585072014e-308) { x *= 4503599627370496; e = -52; }
    f64[0] = x;
    var hi = little ? 1 : 0;
    var be = (u32[hi] >>> 20) & 0x7ff;
    e += be - 1022;
    u32[hi] = (u32[hi] & 0x800fffff) | (1022 << 20);
    return [f64[0], e];
  }
  // log2 as Go's math.Log2: exact for powers of two.
  function log2(x) {
    var fe = frexp(x);
    if (fe[0] === 0.5) return fe[1] - 1;
    return Math.log(fe[0]) * (1 / Math.LN2) + fe[1];
  }

  // ---- the engineering-economy factors and learning curves, as
  // sens/tape/econ.go and learn.go compute their values.
  var invFact = [1], recip = [0];
  for (var k = 1; k < 24; k++) { invFact[k] = invFact[k - 1] / k; recip[k] = 1 / k; }

  function l2Series(i) {
    var p = 1, l2 = 0;
    for (var k = 0; k < 22; k++) {
      l2 += p * recip[k + 2];
      if (Math.abs(p) < 1e-18) break;
      p *= -i;
    }
    return l2;
  }
  function logqValue(i, L) { return i === 0 ? 1 : L / i; }
  function l2Value(i, L) { return Math.abs(i) < 0.1 ? l2Series(i) : (i - L) / (i * i); }
  // expq returns [e1, e2] = [(e^u - 1)/u, (e^u - 1 - u)/u^2].
  function expq(u) {
    if (Math.abs(u) < 0.5) {
      var p = 1, e1 = 0, e2 = 0;
      for (var k = 0; k < 22; k++) {
        e1 += p * invFact[k + 1];
        e2 += p * invFact[k + 2];
        if (Math.abs(p) * invFact[k + 1] < 1e-18) break;
        p *= u;
      }
      return [e1, e2];
    }
    var m = Math.expm1(u), a = m / u;
    return [a, (a - 1) / u];
  }
  function e1Value(u) { return u === 0 ? 1 : Math.expm1(u) / u; }
  function e2Value(u) { return Math.abs(u) < 0.5 ? expq(u)[1] : (Math.expm1(u) - u) / (u * u); }

  function econ(name, i, n) {
    if (!(i > -1)) return NaN;
    var L = Math.log1p(i), u, q;
    switch (name) {
      case "growth": return Math.exp(n * L);
      case "discount": return Math.exp(-n * L);
      case "annuity_fv": return n * logqValue(i, L) * e1Value(n * L);
      case "annuity_pv": return n * logqValue(i, L) * e1Value(-n * L);
      case "sinking": return 1 / (n * logqValue(i, L) * e1Value(n * L));
      case "recovery": return 1 / (n * logqValue(i, L) * e1Value(-n * L));
      case "gradient_pv":
        u = n * L; q = logqValue(i, L);
        return (n * n * q * q * e2Value(u) - n * l2Value(i, L)) / Math.exp(u);
      case "gradient_uniform":
        u = n * L; q = logqValue(i, L);
        return (n * q * q * e2Value(u) - l2Value(i, L)) / (q * e1Value(u));
    }
    return NaN;
  }

  var emM = 16, lnInt = [0];
  for (var j = 1; j <= emM; j++) lnInt[j] = Math.log(j);
  var emCoef = [0, 1 / 12, 0, -1 / 720, 0, 1 / 30240, 0, -1 / 1209600];

  function learn(first, rate, k) {
    if (!(rate > 0) || !(k >= 1)) return NaN;
    return first * Math.pow(k, log2(rate));
  }
  // emTail is the Euler-Maclaurin tail sum_{j=m+1..X} j^b (value only).
  function emTail(b, X) {
    var lm = lnInt[emM], lX = Math.log(X), ell = Math.log(X / emM), c = b + 1;
    var mc = Math.exp(c * lm);
    var t = mc * ell * expq(c * ell)[0];
    var pX = Math.exp(b * lX), pm = Math.exp(b * lm);
    t += (pX - pm) / 2;
    var ff = 1, yX = pX, ym = pm;
    for (var r = 1; r <= 8; r++) {
      ff *= b - (r - 1);
      yX /= X;
      ym /= emM;
      if (r < 8 && r % 2 === 1) t += emCoef[r] * ff * (yX - ym);
    }
    return t;
  }
  // powerSum is sum_{j=1..x} j^b, extended smoothly to fractional x.
  function powerSum(b, x) {
    var n = 0, j, s;
    if (x < emM) n = Math.ceil(emM - x);
    var X = x + n;
    var a = 1;
    for (j = 2; j <= emM; j++) a += Math.exp(b * lnInt[j]);
    var t = emTail(b, X), d = 0;
    for (j = 1; j <= n; j++) d += Math.exp(b * Math.log(x + j));
    s = a + t - d;
    if (x <= emM && x === Math.trunc(x)) {
      s = 1;
      for (j = 2; j <= x; j++) s += Math.exp(b * lnInt[j]);
    }
    return s;
  }
  function learnTotal(first, rate, k) {
    if (!(rate > 0) || !(k >= 1) || k === Infinity) return NaN;
    return first * powerSum(log2(rate), k);
  }

  // ---- the operations: value, and whether a non-finite operand matters.

  var unary = {
    neg: function (x) { return -x; },
    sq: function (x) { return x * x; },
    sqrt: Math.sqrt, exp: Math.exp, ln: Math.log, log10: Math.log10, abs: Math.abs,
    floor: Math.floor, ceil: Math.ceil, round: roundHalfAway,
    sin: Math.sin, cos: Math.cos, tan: Math.tan, asin: Math.asin, acos: Math.acos, atan: Math.atan,
    not: function (x) { return x === 0 ? 1 : 0; }
  };
  var binary = {
    add: function (x, y) { return x + y; },
    sub: function (x, y) { return x - y; },
    mul: function (x, y) { return x * y; },
    div: function (x, y) { return x / y; },
    pow: goPow,
    min: function (x, y) { return x <= y ? x : y; },
    max: function (x, y) { return x >= y ? x : y; },
    lt: function (x, y) { return x < y ? 1 : 0; },
    le: function (x, y) { return x <= y ? 1 : 0; },
    gt: function (x, y) { return x > y ? 1 : 0; },
    ge: function (x, y) { return x >= y ? 1 : 0; },
    eq: function (x, y) { return x === y ? 1 : 0; },
    ne: function (x, y) { return x !== y ? 1 : 0; },
    and: function (x, y) { return x !== 0 && y !== 0 ? 1 : 0; },
    or: function (x, y) { return x !== 0 || y !== 0 ? 1 : 0; }
  };
  ["growth", "discount", "annuity_pv", "annuity_fv", "recovery", "sinking", "gradient_pv", "gradient_uniform"].forEach(function (n) {
    binary[n] = function (i, p) { return econ(n, i, p); };
  });
  var ternary = {
    "if": function (c, a, b) { return c !== 0 ? a : b; },
    learn: learn,
    learn_total: learnTotal
  };
  // goPow is x^y with Go's special cases where they differ from JavaScript's
  // (1^y and (-1)^±Inf are 1 in Go).
  function goPow(x, y) {
    if (x === 1 || y === 0) return 1;
    if (x === -1 && (y === Infinity || y === -Infinity)) return 1;
    return Math.pow(x, y);
  }
  function opFn(name) { return unary[name] || binary[name] || ternary[name]; }
  function arity(name) { return unary[name] ? 1 : binary[name] ? 2 : ternary[name] ? 3 : 0; }

  function num(v) {
    if (typeof v === "number") return v;
    return v === "NaN" ? NaN : v === "Inf" ? Infinity : -Infinity;
  }

  // sumOrdered is the sum of xs[a..a+n) (of products with ys[b..] when ys is
  // set) in the order of sens/tape: four partial sums from four terms on.
  function sumOrdered(v, a, n, b) {
    var dot = b !== undefined;
    function t(j) { return dot ? v[a + j] * v[b + j] : v[a + j]; }
    var r, j;
    if (n < 4) {
      r = t(0);
      for (j = 1; j < n; j++) r += t(j);
      return r;
    }
    var s = [t(0), t(1), t(2), t(3)];
    for (j = 4; j + 4 <= n; j += 4) {
      s[0] += t(j); s[1] += t(j + 1); s[2] += t(j + 2); s[3] += t(j + 3);
    }
    for (r = 0; j < n; j++, r++) s[r] += t(j);
    return (s[0] + s[1]) + (s[2] + s[3]);
  }

  // Program compiles a listing: entries (the JSON array), the output slot,
  // the scale to the output's unit and the source places of operations.
  function Program(entries, out, scale, where) {
    var size = 0, i, e, code = [];
    for (i = 0; i < entries.length; i++) {
      e = entries[i];
      var c = { at: size, w: 1 };
      if (!Array.isArray(e)) {
        c.kind = "const"; c.v = num(e);
      } else if (e[0] === "in") {
        c.kind = "in"; c.j = e[1];
      } else if (e[0] === "map") {
        c.kind = "map"; c.pos = e[1]; c.op = e[2]; c.f = opFn(e[2]); c.ar = arity(e[2]); c.n = e[3];
        c.arg = [e[4], e[6], e[8]]; c.step = [e[5], e[7], e[9]]; c.w = c.n;
      } else if (e[0] === "sum_of" || e[0] === "min_of" || e[0] === "max_of") {
        c.kind = e[0].slice(0, 3); c.pos = e[1]; c.x = e[2]; c.n = e[3];
      } else if (e[0] === "dot_of") {
        c.kind = "dot"; c.pos = e[1]; c.x = e[2]; c.y = e[3]; c.n = e[4];
      } else if (e[0] === "gather") {
        c.kind = "gather"; c.pos = e[1]; c.x = e[2]; c.idx = e[3]; c.w = c.idx.length;
      } else if (e[0] === "group") {
        c.kind = "group"; c.pos = e[1]; c.x = e[2]; c.w = e[3]; c.idx = e[4]; c.first = e[5];
      } else {
        c.kind = "op"; c.op = e[0]; c.pos = e[1]; c.f = opFn(e[0]); c.ar = arity(e[0]);
        c.a = e[2]; c.b = e.length > 3 ? e[3] : e[2]; c.c = e.length > 4 ? e[4] : e[2];
        if (!c.f) throw new Error("unknown operation " + e[0]);
      }
      size += c.w;
      code.push(c);
    }
    this.code = code;
    this.out = out;
    this.scale = scale;
    this.where = where || [];
    this.v = new Float64Array(size);
    this.bad = new Uint8Array(size); // 1: a non-finite value reaches this slot
    this.from = new Int32Array(size); // the entry where it arose
  }

  // eval returns {value} or {error, at} for the free inputs x.
  Program.prototype.eval = function (x) {
    var v = this.v, bad = this.bad, from = this.from, code = this.code;
    var i, j, c, k, a, m, y, p, fin, n, s0, s1, s2;
    // worst folds operand slot s into m, the first entry whose value is
    // not finite among those that reach a slot (-1: none).
    function worst(m, s) { return bad[s] && (m < 0 || from[s] < m) ? from[s] : m; }
    // settle marks slot k of entry i from m and its own value.
    function settle(k, i, m) {
      if (m < 0 && !isFinite(v[k])) m = i;
      bad[k] = m >= 0 ? 1 : 0;
      from[k] = m;
    }
    // operands folds the operand slots of an operation of arity ar (for an
    // if, the condition and the branch it takes).
    function operands(op, ar, sa, sb, sc) {
      var m = worst(-1, sa);
      if (op === "if") return worst(m, v[sa] !== 0 || !isFinite(v[sa]) ? sb : sc);
      if (ar >= 2) m = worst(m, sb);
      if (ar === 3) m = worst(m, sc);
      return m;
    }
    for (i = 0; i < code.length; i++) {
      c = code[i];
      k = c.at;
      switch (c.kind) {
        case "const":
          v[k] = c.v; settle(k, i, -1); break;
        case "in":
          v[k] = x[c.j]; settle(k, i, -1); break;
        case "op":
          v[k] = c.f(v[c.a], v[c.b], v[c.c]);
          settle(k, i, operands(c.op, c.ar, c.a, c.b, c.c));
          break;
        case "map":
          for (j = 0; j < c.n; j++) {
            s0 = c.arg[0] + j * c.step[0]; s1 = c.arg[1] + j * c.step[1]; s2 = c.arg[2] + j * c.step[2];
            v[k + j] = c.f(v[s0], v[s1], v[s2]);
            settle(k + j, i, operands(c.op, c.ar, s0, s1, s2));
          }
          break;
        case "sum": case "dot": case "min": case "max":
          n = c.n;
          if (c.kind === "sum") v[k] = sumOrdered(v, c.x, n);
          else if (c.kind === "dot") v[k] = sumOrdered(v, c.x, n, c.y);
          else {
            p = 0;
            for (j = 1; j < n; j++) {
              if (c.kind === "min" ? !(v[c.x + p] <= v[c.x + j]) : !(v[c.x + p] >= v[c.x + j])) p = j;
            }
            v[k] = v[c.x + p];
          }
          m = -1;
          for (j = 0; j < n; j++) {
            m = worst(m, c.x + j);
            if (c.kind === "dot") m = worst(m, c.y + j);
          }
          settle(k, i, m);
          break;
        case "gather":
          for (j = 0; j < c.idx.length; j++) { v[k + j] = v[c.x + c.idx[j]]; settle(k + j, i, worst(-1, c.x + c.idx[j])); }
          break;
        case "group":
          for (j = 0; j < c.idx.length; j++) {
            y = c.idx[j];
            if (c.first[y] === j) { v[k + y] = v[c.x + j]; from[k + y] = -1; }
            else v[k + y] += v[c.x + j];
            // from[] of the group's slot gathers its members' first
            // non-finite entry until the group is settled below.
            a = worst(from[k + y], c.x + j);
            from[k + y] = a;
            bad[k + y] = 0;
          }
          for (j = 0; j < c.w; j++) settle(k + j, i, from[k + j]);
          break;
      }
    }
    var o = this.out;
    fin = v[o] * this.scale;
    if (bad[o] || !isFinite(fin)) {
      var e = code[from[o] >= 0 ? from[o] : 0];
      return { error: this.explain(e), at: e.pos !== undefined ? this.where[e.pos] || "" : "" };
    }
    return { value: fin };
  };

  // explain says briefly why the entry e gave a value that is not finite.
  Program.prototype.explain = function (e) {
    var v = this.v;
    if (e.kind === "in") return "an input is not a finite number";
    if (e.kind === "const") return "a part of the model that the sliders do not move is undefined here";
    if (e.kind === "map") return "the " + e.op + " of an element is not a finite number";
    if (e.kind !== "op") return "a " + e.kind + " of elements is not a finite number";
    var x = v[e.a], y = v[e.b];
    switch (e.op) {
      case "div": if (y === 0) return "division by zero"; break;
      case "pow": if (x < 0 && y !== Math.trunc(y)) return "a negative number raised to a fractional power";
        if (x === 0 && y < 0) return "zero raised to a negative power"; break;
      case "sqrt": if (x < 0) return "square root of a negative number"; break;
      case "ln": case "log10": if (x <= 0) return e.op + " of " + (x === 0 ? "zero" : "a negative number"); break;
      case "asin": case "acos": if (Math.abs(x) > 1) return e.op + " of a number outside [-1, 1]"; break;
      case "learn": case "learn_total":
        if (!(y > 0)) return e.op + ": the learning rate must be positive";
        if (!(v[e.c] >= 1)) return e.op + ": the unit number must be at least 1"; break;
      default:
        if (binary[e.op] && /growth|discount|annuity|recovery|sinking|gradient/.test(e.op)) {
          if (!(x > -1)) return e.op + ": the interest rate must be above -100%";
          if (y === 0) return e.op + ": undefined for n = 0";
        }
    }
    return "the " + e.op + " here is not a finite number";
  };

  // ---- numbers for people (the rule of sens/unit's formatter, in short).

  var moneyRe = /^(\$|€|£|¥|[A-Z]{3})$/;
  function group3(s) { return s.replace(/\B(?=(\d{3})+(?!\d))/g, ","); }
  function plainNumber(v, decimals) {
    var a = Math.abs(v), s;
    if (a !== 0 && (a < 1e-4 || a >= 1e15)) return v.toExponential(3).replace(/e([+-])(\d)$/, "e$10$2");
    if (decimals === undefined) {
      var mag = a === 0 ? 0 : Math.floor(Math.log10(a));
      decimals = Math.max(0, 3 - mag);
    }
    s = a.toFixed(decimals);
    if (s.indexOf(".") >= 0 && arguments.length < 2) s = s.replace(/0+$/, "").replace(/\.$/, "");
    var parts = s.split(".");
    s = group3(parts[0]) + (parts.length > 1 ? "." + parts[1] : "");
    return (v < 0 && /[1-9]/.test(s) ? "-" : "") + s;
  }
  function formatQ(v, unit) {
    if (!isFinite(v)) return String(v);
    unit = (unit || "").trim();
    if (moneyRe.test(unit)) {
      var a = Math.abs(v), d = a >= 10000 || Math.abs(a - Math.round(a)) < 0.005 ? 0 : a >= 1 ? 2 : undefined;
      var s = d === undefined ? plainNumber(a) : plainNumber(a, d);
      var sym = unit.length === 1;
      return (v < 0 && /[1-9]/.test(s) ? "-" : "") + (sym ? unit + s : s + " " + unit);
    }
    var n = plainNumber(v);
    if (unit === "" || unit === "1") return n;
    if (unit === "%") return n + "%";
    return n + " " + unit;
  }

  // ---- the panel

  // boxText writes an input's value in its box: seven significant digits,
  // enough to read and to type over; the slider keeps every digit.
  function boxText(v) { return String(Number(v.toPrecision(7))); }

  var SVGNS = "http://www.w3.org/2000/svg";
  function el(tag, attrs, text) {
    var e = document.createElement(tag);
    for (var a in attrs) if (Object.prototype.hasOwnProperty.call(attrs, a)) e.setAttribute(a, attrs[a]);
    if (text !== undefined) e.textContent = text;
    return e;
  }
  function svgEl(tag, attrs, text) {
    var e = document.createElementNS(SVGNS, tag);
    for (var a in attrs) if (Object.prototype.hasOwnProperty.call(attrs, a)) e.setAttribute(a, attrs[a]);
    if (text !== undefined) e.textContent = text;
    return e;
  }

  function setup(box) {
    if (box.getAttribute("data-ready")) return;
    var src = box.querySelector("script.nudge-explore-data");
    if (!src) return;
    box.setAttribute("data-ready", "1");
    var d;
    try {
      d = JSON.parse(src.textContent);
    } catch (err) {
      box.appendChild(el("p", { "class": "nudge-explore-error" }, "The panel's data cannot be read: " + err.message));
      return;
    }
    var prog = new Program(d.listing, d.out, d.scale, d.where);
    var ins = d.inputs;
    var x = ins.map(function (q) { return q.value; });

    var stat = box.querySelector(".nudge-explore-static");
    if (stat) stat.style.display = "none";

    var panel = el("div", { "class": "nudge-explore-live" });
    var head = el("div", { "class": "nudge-explore-head" });
    head.appendChild(el("span", { "class": "nudge-explore-name" }, d.output + " = "));
    var shown = el("span", { "class": "nudge-explore-value", "aria-live": "polite" });
    head.appendChild(shown);
    var delta = el("span", { "class": "nudge-explore-delta" });
    head.appendChild(delta);
    panel.appendChild(head);
    var msg = el("p", { "class": "nudge-explore-error", role: "alert" });
    panel.appendChild(msg);

    var grid = el("div", { "class": "nudge-explore-grid" });
    var sliders = [], boxes = [];
    ins.forEach(function (q, i) {
      var id = "nx" + Math.random().toString(36).slice(2) + i;
      grid.appendChild(el("label", { "for": id, "class": "nudge-explore-label" }, q.name));
      grid.appendChild(el("span", { "class": "nudge-explore-end" }, formatQ(q.low, q.unit)));
      // The slider spans the range and the baseline, which a skewed
      // distribution's P10..P90 can leave outside.
      var s = el("input", { type: "range", id: id, min: String(Math.min(q.low, q.value)), max: String(Math.max(q.high, q.value)), step: "any",
        value: String(q.value), "data-input": q.name, "class": "nudge-explore-slider",
        "aria-valuetext": formatQ(q.value, q.unit) });
      grid.appendChild(s);
      grid.appendChild(el("span", { "class": "nudge-explore-end" }, formatQ(q.high, q.unit)));
      var b = el("input", { type: "text", inputmode: "decimal", size: "10", value: boxText(q.value),
        "class": "nudge-explore-box", "data-input": q.name, "aria-label": q.name + (q.unit ? " in " + q.unit : "") });
      var cell = el("span", { "class": "nudge-explore-entry" });
      cell.appendChild(b);
      cell.appendChild(el("span", { "class": "nudge-explore-unit" }, q.unit && q.unit !== "1" ? " " + q.unit : ""));
      grid.appendChild(cell);
      s.addEventListener("input", function () {
        x[i] = parseFloat(s.value);
        b.value = boxText(x[i]);
        update();
      });
      b.addEventListener("change", function () {
        var t = parseFloat(b.value.replace(/[,_\s]/g, ""));
        if (!isFinite(t)) { b.value = boxText(x[i]); return; }
        x[i] = t;
        s.value = String(t);
        update();
      });
      sliders.push(s);
      boxes.push(b);
    });
    panel.appendChild(grid);

    var reset = el("button", { type: "button", "class": "nudge-explore-reset" }, "Back to the baseline");
    reset.addEventListener("click", function () {
      ins.forEach(function (q, i) { x[i] = q.value; sliders[i].value = String(q.value); boxes[i].value = boxText(q.value); });
      update();
    });
    panel.appendChild(reset);

    var chartBox = el("div", { "class": "nudge-explore-chart" });
    panel.appendChild(chartBox);
    panel.appendChild(el("p", { "class": "nudge-explore-note" },
      "Each bar joins " + d.output + " at the low and the high end of that input's range (dark: the high end), the others where the sliders are; " +
      "a peak or trough inside a range is not drawn (the tornado command looks for one). " +
      "The line: " + d.output + " at the sliders. Computed in this page from the compiled model."));
    // The panel goes first; notes written with the page follow it.
    box.insertBefore(panel, src.nextSibling);

    function update() {
      var r = prog.eval(x);
      ins.forEach(function (q, i) { sliders[i].setAttribute("aria-valuetext", formatQ(x[i], q.unit)); });
      if (r.error) {
        shown.textContent = "undefined";
        shown.setAttribute("data-value", "NaN");
        delta.textContent = "";
        msg.textContent = "The model is undefined at these inputs: " + r.error + (r.at ? " at " + r.at : "") + ".";
        chartBox.textContent = "";
        return;
      }
      msg.textContent = "";
      shown.textContent = formatQ(r.value, d.unit);
      shown.setAttribute("data-value", String(r.value));
      shown.title = String(r.value);
      var dv = r.value - d.base;
      delta.textContent = dv === 0 ? "  (the baseline)" : "  (" + (dv > 0 ? "+" : "-") + formatQ(Math.abs(dv), d.unit) + " from the baseline " + formatQ(d.base, d.unit) + ")";
      drawBars(r.value);
    }

    function drawBars(now) {
      var bars = [];
      ins.forEach(function (q, i) {
        var keep = x[i], lo, hi;
        x[i] = q.low; lo = prog.eval(x);
        x[i] = q.high; hi = prog.eval(x);
        x[i] = keep;
        bars.push({ name: q.name, lo: lo.error ? NaN : lo.value, hi: hi.error ? NaN : hi.value });
      });
      bars.forEach(function (b) { b.swing = Math.abs(b.hi - b.lo); });
      bars.sort(function (a, b) { return (isNaN(b.swing) ? -1 : b.swing) - (isNaN(a.swing) ? -1 : a.swing) || (a.name < b.name ? -1 : 1); });
      var lo = now, hi = now;
      bars.forEach(function (b) {
        if (isFinite(b.lo)) { lo = Math.min(lo, b.lo); hi = Math.max(hi, b.lo); }
        if (isFinite(b.hi)) { lo = Math.min(lo, b.hi); hi = Math.max(hi, b.hi); }
      });
      if (hi === lo) { hi += Math.abs(hi) * 0.01 || 1; lo -= Math.abs(lo) * 0.01 || 1; }
      var W = 560, left = 150, right = 20, rowH = 24, top = 8;
      var H = top + bars.length * rowH + 26;
      var sx = function (t) { return left + (t - lo) / (hi - lo) * (W - left - right); };
      var svg = svgEl("svg", { "class": "nudge-explore-bars", width: String(W), height: String(H), viewBox: "0 0 " + W + " " + H, role: "img",
        "aria-label": "tornado bars of " + d.output + " at the sliders" });
      bars.forEach(function (b, r) {
        var y = top + r * rowH;
        // The label carries the bar's ends, every digit, for programs that read the page.
        svg.appendChild(svgEl("text", { x: String(left - 8), y: String(y + 15), "text-anchor": "end", "font-size": "12",
          "class": "nudge-explore-bar", "data-input": b.name, "data-low": String(b.lo), "data-high": String(b.hi) }, b.name));
        if (!isFinite(b.lo) || !isFinite(b.hi)) {
          svg.appendChild(svgEl("text", { x: String(left), y: String(y + 15), "font-size": "11", fill: "#8a3b12" }, "undefined at an end of the range"));
          return;
        }
        var a = sx(Math.min(b.lo, b.hi)), z = sx(Math.max(b.lo, b.hi)), m = sx(now);
        var lowSide = b.lo <= b.hi;
        // The part of the bar at the input's low end is light, the high end dark.
        svg.appendChild(svgEl("rect", { x: String(lowSide ? a : m), y: String(y + 3), width: String(Math.max(0, lowSide ? m - a : z - m)), height: String(rowH - 7), fill: "#9cc3b8" }));
        svg.appendChild(svgEl("rect", { x: String(lowSide ? m : a), y: String(y + 3), width: String(Math.max(0, lowSide ? z - m : m - a)), height: String(rowH - 7), fill: "#2f6f62" }));
        var tip = svgEl("title", {}, b.name + ": " + formatQ(b.lo, d.unit) + " at low, " + formatQ(b.hi, d.unit) + " at high");
        svg.lastChild.appendChild(tip);
      });
      var m = sx(now), yb = top + bars.length * rowH;
      svg.appendChild(svgEl("line", { x1: String(m), x2: String(m), y1: String(top), y2: String(yb), stroke: "#333", "stroke-width": "1.5" }));
      svg.appendChild(svgEl("text", { x: String(left), y: String(yb + 18), "font-size": "11", fill: "#555" }, formatQ(lo, d.unit)));
      svg.appendChild(svgEl("text", { x: String(W - right), y: String(yb + 18), "font-size": "11", fill: "#555", "text-anchor": "end" }, formatQ(hi, d.unit)));
      svg.appendChild(svgEl("text", { x: String(m), y: String(yb + 18), "font-size": "11", "text-anchor": "middle" }, formatQ(now, d.unit)));
      chartBox.textContent = "";
      chartBox.appendChild(svg);
    }

    update();
  }

  function setupNow() {
    var boxes = document.querySelectorAll("div.nudge-explore");
    for (var i = 0; i < boxes.length; i++) setup(boxes[i]);
  }
  // setupAll sets up the panels in the page now and, for a panel whose
  // output is attached to the page after its script ran (the classic
  // Notebook and JupyterLab attach it after running it), once the page's
  // script has returned.
  function setupAll() {
    if (typeof document === "undefined") return;
    setupNow();
    setTimeout(setupNow, 0);
    if (document.readyState === "loading") document.addEventListener("DOMContentLoaded", setupNow);
  }

  var api = { version: 1, Program: Program, formatQ: formatQ, setupAll: setupAll, roundHalfAway: roundHalfAway, log2: log2 };
  if (root) root.nudgeExplore = api;
  if (typeof module !== "undefined" && module.exports) module.exports = api;
  setupAll();
})(typeof window !== "undefined" ? window : null);
