(() => {
  // src/page/api.ts
  var ApiError = class extends Error {
    status;
    code;
    issues;
    constructor(status, code, message, issues = []) {
      super(message), this.status = status, this.code = code, this.issues = issues;
    }
  };
  var TOKEN_KEY = "evenfill.token";
  function setAccessToken(token) {
    if (token) sessionStorage.setItem(TOKEN_KEY, token);
    else sessionStorage.removeItem(TOKEN_KEY);
  }
  var TIMEOUTS_MS = {
    /** Listings, health, a scenario, a job's state. */
    read: 8e3,
    /** Validation, saving, starting or cancelling a job. */
    write: 15e3,
    /** A synchronous simulation (the service's own limit is 10 s by default, plus the trip). */
    simulate: 3e4
  };
  var unreachable = /* @__PURE__ */ new Set();
  function onServiceUnreachable(listener) {
    unreachable.add(listener);
    return () => unreachable.delete(listener);
  }
  function noAnswerError(error, timeoutMs, cancelled) {
    const name = error?.name;
    if (cancelled) return new ApiError(0, "cancelled", "Cancelled.");
    if (name === "TimeoutError") {
      return new ApiError(0, "timeout", `The service did not answer within ${Math.round(timeoutMs / 1e3)} s; nothing was changed on the page. Try again, or check that the service is running.`);
    }
    return new ApiError(0, "network", "The service cannot be reached: it may be stopped or restarting. The page checks again by itself.");
  }
  async function call(method, url, body, options = {}) {
    let response;
    const headers = {};
    if (body !== void 0) headers["content-type"] = "application/json";
    const token = sessionStorage.getItem(TOKEN_KEY);
    if (token && method !== "GET") headers.authorization = `Bearer ${token}`;
    const timeoutMs = options.timeoutMs ?? (method === "GET" ? TIMEOUTS_MS.read : TIMEOUTS_MS.write);
    const timeout = AbortSignal.timeout(timeoutMs);
    const signal = options.signal ? AbortSignal.any([
      timeout,
      options.signal
    ]) : timeout;
    try {
      response = await fetch(url, {
        method,
        headers,
        signal,
        ...body === void 0 ? {} : {
          body: JSON.stringify(body)
        }
      });
    } catch (error) {
      const cancelled = options.signal?.aborted === true;
      const failure = noAnswerError(error, timeoutMs, cancelled);
      if (!cancelled) {
        for (const listener of unreachable) listener();
      }
      throw failure;
    }
    if (response.status === 204) return void 0;
    const text = await response.text();
    let json = null;
    try {
      json = text ? JSON.parse(text) : null;
    } catch {
      throw new ApiError(response.status, "bad_response", `Not JSON from ${url}: ${text.slice(0, 200)}`);
    }
    if (!response.ok) {
      const e = json?.error;
      throw new ApiError(response.status, e?.code ?? "http_" + response.status, e?.message ?? `${method} ${url} answered ${response.status}`, e?.issues ?? []);
    }
    return json;
  }
  var api = {
    health: (timeoutMs = 3e3) => call("GET", "/api/health", void 0, {
      timeoutMs
    }),
    materials: () => call("GET", "/api/materials"),
    demos: () => call("GET", "/api/demos"),
    demo: (id) => call("GET", `/api/demos/${encodeURIComponent(id)}`),
    scenarios: () => call("GET", "/api/scenarios"),
    scenario: (id) => call("GET", `/api/scenarios/${encodeURIComponent(id)}`),
    createScenario: (scenario) => call("POST", "/api/scenarios", scenario),
    updateScenario: (id, scenario) => call("PUT", `/api/scenarios/${encodeURIComponent(id)}`, scenario),
    revisions: (id) => call("GET", `/api/scenarios/${encodeURIComponent(id)}/revisions`),
    revision: (id, revision) => call("GET", `/api/scenarios/${encodeURIComponent(id)}/revisions/${revision}`),
    validate: (scenario) => call("POST", "/api/validate", scenario),
    simulate: (scenario, signal) => call("POST", "/api/simulate?history=1", scenario, {
      timeoutMs: TIMEOUTS_MS.simulate,
      ...signal ? {
        signal
      } : {}
    }),
    startJob: (scenario, options = {}) => call("POST", "/api/jobs", {
      kind: "optimize",
      scenario,
      ...options.mode ? {
        mode: options.mode
      } : {},
      ...options.slopes ? {
        slopes: options.slopes
      } : {}
    }),
    startCalibration: (scenario, factors) => call("POST", "/api/jobs", {
      kind: "calibrate",
      scenario,
      factors
    }),
    startWindow: (scenario, after) => call("POST", "/api/jobs", {
      kind: "window",
      scenario,
      ...after !== void 0 ? {
        after_scenario: after
      } : {}
    }),
    job: (id) => call("GET", `/api/jobs/${encodeURIComponent(id)}`),
    cancelJob: (id) => call("POST", `/api/jobs/${encodeURIComponent(id)}/cancel`)
  };
  function watchJob(id, watch) {
    return new Promise((resolve, reject) => {
      let finished = false;
      let timer;
      let source;
      const finish = async () => {
        if (finished) return;
        finished = true;
        source?.close();
        if (timer !== void 0) clearTimeout(timer);
        try {
          resolve(await api.job(id));
        } catch (error) {
          reject(error);
        }
      };
      const poll = async () => {
        if (finished) return;
        try {
          const job = await api.job(id);
          watch.onState?.(job.status);
          if (job.progress) watch.onProgress?.(job.progress);
          if (job.status === "done" || job.status === "failed" || job.status === "cancelled") {
            finished = true;
            resolve(job);
            return;
          }
        } catch (error) {
          if (error instanceof ApiError && error.status === 404) {
            finished = true;
            reject(error);
            return;
          }
        }
        timer = setTimeout(poll, 1e3);
      };
      if (typeof EventSource === "undefined") {
        poll();
        return;
      }
      source = new EventSource(`/api/jobs/${encodeURIComponent(id)}/events`);
      source.addEventListener("state", (e) => {
        try {
          watch.onState?.(JSON.parse(e.data).status);
        } catch {
        }
      });
      source.addEventListener("progress", (e) => {
        try {
          watch.onProgress?.(JSON.parse(e.data));
        } catch {
        }
      });
      source.addEventListener("end", () => finish());
      source.onerror = () => {
        if (finished) return;
        source?.close();
        source = void 0;
        watch.onStreamLost?.();
        poll();
      };
    });
  }

  // src/page/chart.ts
  var SERIES_COLOURS = [
    "#0072B2",
    "#D55E00",
    "#009E73",
    "#CC79A7",
    "#B07800",
    "#3C8DC5",
    "#000000"
  ];
  var SERIES_DASHES = [
    "",
    "7 3",
    "2 2.5",
    "9 3 2 3",
    "4 4",
    "12 3 2 3 2 3",
    "1 4"
  ];
  var SERIES_MARKERS = [
    "circle",
    "square",
    "triangle",
    "diamond",
    "cross",
    "plus",
    "bar"
  ];
  function seriesStyle(index) {
    const k = (index % 7 + 7) % 7;
    const round2 = Math.floor(index / 7);
    return {
      colour: SERIES_COLOURS[k],
      dash: SERIES_DASHES[(k + round2) % SERIES_DASHES.length],
      marker: SERIES_MARKERS[k]
    };
  }
  function linearScale(domain, range) {
    let [d0, d1] = domain;
    if (d1 === d0) {
      d0 -= 0.5;
      d1 += 0.5;
    }
    const f = (v) => range[0] + (v - d0) / (d1 - d0) * (range[1] - range[0]);
    return Object.assign(f, {
      domain: [
        d0,
        d1
      ],
      range
    });
  }
  function niceStep(lo, hi, count = 5) {
    const span = Math.abs(hi - lo);
    if (!(span > 0) || !Number.isFinite(span)) return 1;
    const raw = span / Math.max(1, count);
    const power = Math.pow(10, Math.floor(Math.log10(raw)));
    const fraction = raw / power;
    const nice = fraction <= 1 ? 1 : fraction <= 2 ? 2 : fraction <= 2.5 ? 2.5 : fraction <= 5 ? 5 : 10;
    return nice * power;
  }
  function niceDomain(lo, hi, count = 5) {
    if (!Number.isFinite(lo) || !Number.isFinite(hi)) return niceDomain(0, 1, count);
    if (hi < lo) [lo, hi] = [
      hi,
      lo
    ];
    if (hi === lo) {
      hi = lo === 0 ? 1 : lo + Math.abs(lo) * 0.1;
    }
    const step = niceStep(lo, hi, count);
    const start2 = Math.floor(lo / step + 1e-9) * step;
    const end = Math.ceil(hi / step - 1e-9) * step;
    const ticks = [];
    for (let k = 0; start2 + k * step <= end + step * 1e-9; k++) {
      ticks.push(Number((start2 + k * step).toPrecision(12)));
    }
    return {
      domain: [
        start2,
        end
      ],
      ticks,
      step
    };
  }
  function tickLabel(value, step) {
    const decimals = Math.max(0, Math.min(6, -Math.floor(Math.log10(step) + 1e-9) + (Math.abs(step / Math.pow(10, Math.floor(Math.log10(step))) - 2.5) < 1e-9 ? 1 : 0)));
    return value.toFixed(decimals);
  }
  function escapeXml(text) {
    return text.replace(/[&<>"']/g, (c) => ({
      "&": "&amp;",
      "<": "&lt;",
      ">": "&gt;",
      '"': "&quot;",
      "'": "&#39;"
    })[c]);
  }
  var fmt = (v) => (Math.round(v * 100) / 100).toString();
  function markerSvg(shape, x, y, size, colour) {
    const s = size / 2;
    const fill = `fill="${colour}" stroke="${colour}"`;
    switch (shape) {
      case "circle":
        return `<circle cx="${fmt(x)}" cy="${fmt(y)}" r="${fmt(s)}" ${fill}/>`;
      case "square":
        return `<rect x="${fmt(x - s)}" y="${fmt(y - s)}" width="${fmt(size)}" height="${fmt(size)}" ${fill}/>`;
      case "triangle":
        return `<polygon points="${fmt(x)},${fmt(y - s * 1.2)} ${fmt(x + s * 1.1)},${fmt(y + s * 0.9)} ${fmt(x - s * 1.1)},${fmt(y + s * 0.9)}" ${fill}/>`;
      case "diamond":
        return `<polygon points="${fmt(x)},${fmt(y - s * 1.3)} ${fmt(x + s)},${fmt(y)} ${fmt(x)},${fmt(y + s * 1.3)} ${fmt(x - s)},${fmt(y)}" ${fill}/>`;
      case "cross":
        return `<path d="M${fmt(x - s)},${fmt(y - s)}L${fmt(x + s)},${fmt(y + s)}M${fmt(x - s)},${fmt(y + s)}L${fmt(x + s)},${fmt(y - s)}" stroke="${colour}" stroke-width="2" fill="none"/>`;
      case "plus":
        return `<path d="M${fmt(x - s)},${fmt(y)}L${fmt(x + s)},${fmt(y)}M${fmt(x)},${fmt(y - s)}L${fmt(x)},${fmt(y + s)}" stroke="${colour}" stroke-width="2" fill="none"/>`;
      default:
        return `<rect x="${fmt(x - s * 1.3)}" y="${fmt(y - s * 0.5)}" width="${fmt(s * 2.6)}" height="${fmt(s)}" ${fill}/>`;
    }
  }
  function extent(series, extraY = []) {
    let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
    for (const s of series) {
      for (const [x, y] of s.points) {
        if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
        x0 = Math.min(x0, x);
        x1 = Math.max(x1, x);
        y0 = Math.min(y0, y);
        y1 = Math.max(y1, y);
      }
    }
    for (const y of extraY) {
      if (!Number.isFinite(y)) continue;
      y0 = Math.min(y0, y);
      y1 = Math.max(y1, y);
    }
    if (x0 > x1) [x0, x1] = [
      0,
      1
    ];
    if (y0 > y1) [y0, y1] = [
      0,
      1
    ];
    return {
      x: [
        x0,
        x1
      ],
      y: [
        y0,
        y1
      ]
    };
  }
  function lineChart(series, options) {
    const width = options.width ?? 480;
    const height = options.height ?? 280;
    const margin = {
      left: 58,
      right: 64,
      top: options.title ? 28 : 12,
      bottom: 44
    };
    const data = extent(series, (options.rules ?? []).map((r) => r.y));
    let xd = niceDomain(...options.xDomain ?? data.x, 6);
    if (options.integerX && xd.step < 1) {
      xd = niceDomain(xd.domain[0], Math.max(xd.domain[1], xd.domain[0] + 1), 1);
      const ticks = [];
      for (let t = Math.ceil(xd.domain[0]); t <= xd.domain[1]; t++) ticks.push(t);
      xd = {
        domain: xd.domain,
        ticks,
        step: 1
      };
    }
    const yd = niceDomain(...options.yDomain ?? [
      Math.min(0, data.y[0]),
      data.y[1]
    ], 5);
    const xs = linearScale(xd.domain, [
      margin.left,
      width - margin.right
    ]);
    const ys = linearScale(yd.domain, [
      height - margin.bottom,
      margin.top
    ]);
    const out = [];
    out.push(`<svg xmlns="http://www.w3.org/2000/svg" class="chart" ${options.id ? `id="${escapeXml(options.id)}" ` : ""}viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="${escapeXml(options.title ?? options.yLabel)}">`);
    if (options.title) {
      out.push(`<text class="chart-title" x="${margin.left}" y="16">${escapeXml(options.title)}</text>`);
    }
    out.push(`<g class="axis">`);
    const xTicks = options.xTickLabels ? [
      ...options.xTickLabels.keys()
    ] : xd.ticks;
    for (const t of yd.ticks) {
      const y = fmt(ys(t));
      out.push(`<line class="grid" x1="${margin.left}" x2="${width - margin.right}" y1="${y}" y2="${y}"/>`, `<text class="tick" x="${margin.left - 6}" y="${y}" text-anchor="end" dy="0.32em">${tickLabel(t, yd.step)}</text>`);
    }
    for (const t of xTicks) {
      const x = fmt(xs(t));
      const label = options.xTickLabels?.get(t) ?? tickLabel(t, xd.step);
      out.push(`<line class="grid" x1="${x}" x2="${x}" y1="${margin.top}" y2="${height - margin.bottom}"/>`, `<text class="tick" x="${x}" y="${height - margin.bottom + 14}" text-anchor="middle">${escapeXml(label)}</text>`);
    }
    out.push(`<rect class="frame" x="${margin.left}" y="${margin.top}" width="${width - margin.left - margin.right}" height="${height - margin.top - margin.bottom}" fill="none"/>`, `<text class="axis-label" x="${(margin.left + width - margin.right) / 2}" y="${height - 6}" text-anchor="middle">${escapeXml(options.xLabel)}</text>`, `<text class="axis-label" transform="translate(14 ${(margin.top + height - margin.bottom) / 2}) rotate(-90)" text-anchor="middle">${escapeXml(options.yLabel)}</text>`, `</g>`);
    for (const rule of options.rules ?? []) {
      if (rule.y < yd.domain[0] || rule.y > yd.domain[1]) continue;
      const y = fmt(ys(rule.y));
      out.push(`<g class="rule"><line x1="${margin.left}" x2="${width - margin.right}" y1="${y}" y2="${y}" stroke="#000" stroke-width="1.5" stroke-dasharray="10 3 2 3"/><text x="${width - margin.right - 4}" y="${y}" dy="-0.35em" text-anchor="end">${escapeXml(rule.label)}</text></g>`);
    }
    for (const v of options.verticals ?? []) {
      if (!(v.x >= xd.domain[0] && v.x <= xd.domain[1])) continue;
      const x = fmt(xs(v.x));
      const labelY = v.at === "top" ? margin.top + 11 : height - margin.bottom - 4;
      out.push(`<g class="rule vertical"${v.mark ? ` data-mark="${escapeXml(v.mark)}" data-x="${v.x}"` : ""}><line x1="${x}" x2="${x}" y1="${margin.top}" y2="${height - margin.bottom}" stroke="#000" stroke-width="${v.mark ? 1.5 : 1}" stroke-dasharray="${v.mark ? "6 2 1 2" : "3 3"}"/><text x="${x}" y="${labelY}" dx="-4" text-anchor="end">${escapeXml(v.label)}</text></g>`);
    }
    const ends = [];
    series.forEach((s) => {
      const st = seriesStyle(s.style);
      const pts = s.points.filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y));
      if (pts.length === 0) return;
      let d = "";
      pts.forEach(([x, y], k) => {
        if (k === 0) d += `M${fmt(xs(x))},${fmt(ys(y))}`;
        else if (options.steps) d += `H${fmt(xs(x))}V${fmt(ys(y))}`;
        else d += `L${fmt(xs(x))},${fmt(ys(y))}`;
      });
      const colour = s.faint ? "#777" : st.colour;
      out.push(`<g class="series${s.faint ? " faint" : ""}" data-series="${escapeXml(s.label)}"><path d="${d}" fill="none" stroke="${colour}" stroke-width="${s.faint ? 1.2 : 2}"${st.dash ? ` stroke-dasharray="${st.dash}"` : ""}/>`);
      const marked = options.markEveryPoint ? pts : [
        pts[pts.length - 1]
      ];
      for (const [x, y] of marked) out.push(markerSvg(st.marker, xs(x), ys(y), 6, colour));
      out.push(`</g>`);
      if (!s.faint || options.labelFaint) {
        const [, yLast] = pts[pts.length - 1];
        ends.push({
          y: ys(yLast),
          label: s.label,
          colour
        });
      }
    });
    ends.sort((a, b) => a.y - b.y);
    for (let k = 1; k < ends.length; k++) {
      if (ends[k].y - ends[k - 1].y < 11) ends[k].y = ends[k - 1].y + 11;
    }
    const bottom = height - margin.bottom + 4;
    const overflow = ends.length ? ends[ends.length - 1].y - bottom : 0;
    if (overflow > 0) {
      for (const e of ends) e.y = Math.max(margin.top, e.y - overflow);
    }
    for (const e of ends) {
      out.push(`<text class="end-label" x="${width - margin.right + 6}" y="${fmt(e.y)}" dy="0.32em">${escapeXml(e.label)}</text>`);
    }
    out.push(`</svg>`);
    return out.join("");
  }

  // src/model/units.ts
  var M_PER_MM = 1e-3;
  var M_PER_INCH = 0.0254;
  var M3_PER_CM3 = 1e-6;
  var PA_PER_MPA = 1e6;
  var PA_PER_BAR = 1e5;
  var PA_PER_PSI = 4.4482216152605 / (M_PER_INCH * M_PER_INCH);
  var N_PER_KN = 1e3;
  var N_PER_TONNE_FORCE = 1e3 * 9.80665;
  var N_PER_US_TON_FORCE = 2e3 * 4.4482216152605;
  var cToF = (c) => c * 1.8 + 32;

  // src/page/display_units.ts
  var METRIC_UNITS = {
    length: "mm",
    pressure: "MPa",
    force: "kN",
    temperature: "C"
  };
  var UNIT_CHOICES = {
    length: [
      [
        "mm",
        "mm"
      ],
      [
        "in",
        "inch"
      ]
    ],
    pressure: [
      [
        "MPa",
        "MPa"
      ],
      [
        "bar",
        "bar"
      ],
      [
        "psi",
        "psi"
      ]
    ],
    force: [
      [
        "kN",
        "kN"
      ],
      [
        "tf",
        "tonne-force"
      ],
      [
        "tonUS",
        "US ton"
      ]
    ],
    temperature: [
      [
        "C",
        "\xB0C"
      ],
      [
        "F",
        "\xB0F"
      ]
    ]
  };
  function unitSymbol(units, quantity) {
    switch (quantity) {
      case "length":
        return units.length === "mm" ? "mm" : "in";
      case "pressure":
        return units.pressure;
      case "force":
        return units.force === "kN" ? "kN" : units.force === "tf" ? "tf" : "US tonf";
      case "temperature":
        return units.temperature === "C" ? "\xB0C" : "\xB0F";
    }
  }
  function lengthFromMm(mm, unit) {
    return unit === "mm" ? mm : mm * M_PER_MM / M_PER_INCH;
  }
  function lengthToMm(value, unit) {
    return unit === "mm" ? value : value * M_PER_INCH / M_PER_MM;
  }
  function pressureFromMpa(mpa, unit) {
    const pa = mpa * PA_PER_MPA;
    return unit === "MPa" ? mpa : unit === "bar" ? pa / PA_PER_BAR : pa / PA_PER_PSI;
  }
  function forceFromKn(kn, unit) {
    const n = kn * N_PER_KN;
    return unit === "kN" ? kn : unit === "tf" ? n / N_PER_TONNE_FORCE : n / N_PER_US_TON_FORCE;
  }
  function temperatureFromC(c, unit) {
    return unit === "C" ? c : cToF(c);
  }
  function temperatureToC(value, unit) {
    return unit === "C" ? value : (value - 32) / 1.8;
  }
  function formatNumber(value, digits = 3) {
    if (value === null || value === void 0 || !Number.isFinite(value)) return "\u2013";
    if (value === 0) return "0";
    const magnitude = Math.floor(Math.log10(Math.abs(value)));
    const decimals = Math.max(0, digits - 1 - magnitude);
    if (magnitude < -4) return value.toPrecision(digits);
    if (decimals === 0) return groupThousands(Math.round(value).toFixed(0));
    return groupThousands(value.toFixed(Math.min(decimals, 8)));
  }
  function groupThousands(text) {
    const m = /^(-?)(\d+)(\.\d*)?$/.exec(text);
    if (!m) return text;
    return m[1] + m[2].replace(/\B(?=(\d{3})+(?!\d))/g, ",") + (m[3] ?? "");
  }
  function formatLength(mm, unit) {
    if (mm === null || mm === void 0 || !Number.isFinite(mm)) return "\u2013";
    const v = lengthFromMm(mm, unit);
    return unit === "mm" ? trimZeros(v.toFixed(2)) : v.toFixed(4);
  }
  function formatPressure(mpa, units) {
    if (mpa === null || mpa === void 0 || !Number.isFinite(mpa)) return "\u2013";
    const v = pressureFromMpa(mpa, units.pressure);
    const text = units.pressure === "psi" ? groupThousands(Math.round(v).toFixed(0)) : formatNumber(v, 3);
    return `${text} ${unitSymbol(units, "pressure")}`;
  }
  function formatForce(kn, units) {
    if (kn === null || kn === void 0 || !Number.isFinite(kn)) return "\u2013";
    return `${formatNumber(forceFromKn(kn, units.force), 3)} ${unitSymbol(units, "force")}`;
  }
  var G_PER_OUNCE = 28.349523125;
  var G_PER_POUND = 453.59237;
  var CM3_PER_CUBIC_INCH = Math.pow(M_PER_INCH, 3) / M3_PER_CM3;
  var usUnits = (units) => units.length === "in";
  function formatVolume(cm3, units, digits = 3) {
    if (cm3 === null || cm3 === void 0 || !Number.isFinite(cm3)) return "\u2013";
    return usUnits(units) ? `${formatNumber(cm3 / CM3_PER_CUBIC_INCH, digits)} in\xB3` : `${formatNumber(cm3, digits)} cm\xB3`;
  }
  function formatMass(g, units, digits = 3) {
    if (g === null || g === void 0 || !Number.isFinite(g)) return "\u2013";
    if (!usUnits(units)) return `${formatNumber(g, digits)} g`;
    return g >= G_PER_POUND ? `${formatNumber(g / G_PER_POUND, digits)} lb` : `${formatNumber(g / G_PER_OUNCE, digits)} oz`;
  }
  function formatTemperature(c, units) {
    if (c === null || c === void 0 || !Number.isFinite(c)) return "\u2013";
    const v = temperatureFromC(c, units.temperature);
    return `${trimZeros(v.toFixed(1))} ${unitSymbol(units, "temperature")}`;
  }
  function formatTemperatureRise(k, units) {
    if (k === null || k === void 0 || !Number.isFinite(k)) return "\u2013";
    const v = units.temperature === "C" ? k : k * 1.8;
    return `${trimZeros(v.toFixed(1))} ${units.temperature === "C" ? "K" : "\xB0F"}`;
  }
  function trimZeros(text) {
    return text.includes(".") ? text.replace(/\.?0+$/, "") : text;
  }
  function parseDisplayUnits(value) {
    const out = {
      ...METRIC_UNITS
    };
    if (typeof value !== "object" || value === null) return out;
    const v = value;
    for (const key of Object.keys(UNIT_CHOICES)) {
      const allowed = UNIT_CHOICES[key].map((c) => c[0]);
      if (typeof v[key] === "string" && allowed.includes(v[key])) {
        out[key] = v[key];
      }
    }
    return out;
  }

  // src/page/json_locate.ts
  function pathKey(path) {
    if (path.length === 0) return "$";
    let text = "";
    for (const part of path) {
      if (typeof part === "number") text += `[${part}]`;
      else text += text === "" ? part : `.${part}`;
    }
    return text;
  }
  function lineLocator(text) {
    const starts = [
      0
    ];
    for (let i = 0; i < text.length; i++) if (text.charCodeAt(i) === 10) starts.push(i + 1);
    return (offset) => {
      const end = Math.min(offset, text.length);
      let lo = 0;
      let hi = starts.length - 1;
      while (lo < hi) {
        const mid = lo + hi + 1 >> 1;
        if (starts[mid] <= end) lo = mid;
        else hi = mid - 1;
      }
      return {
        line: lo + 1,
        column: end - starts[lo] + 1
      };
    };
  }
  var JsonSyntaxError = class extends Error {
    offset;
    constructor(message, offset) {
      super(message), this.offset = offset;
    }
  };
  function locateJson(text) {
    const spans = /* @__PURE__ */ new Map();
    let i = 0;
    const locate = lineLocator(text);
    const span = (start2, end) => ({
      start: start2,
      end,
      ...locate(start2)
    });
    const fail = (message, at = i) => {
      throw new JsonSyntaxError(message, at);
    };
    const describe = (at) => at >= text.length ? "the end of the text" : `\u201C${text[at]}\u201D`;
    const skip = () => {
      while (i < text.length) {
        const c = text.charCodeAt(i);
        if (c === 32 || c === 9 || c === 10 || c === 13) i++;
        else break;
      }
    };
    const readString = () => {
      const start2 = i;
      i++;
      let out = "";
      while (true) {
        if (i >= text.length) fail('A string is not closed: a quote \u201C"\u201D is missing', start2);
        const c = text[i];
        if (c === '"') {
          i++;
          return out;
        }
        if (c === "\\") {
          const e = text[i + 1];
          const simple = {
            '"': '"',
            "\\": "\\",
            "/": "/",
            b: "\b",
            f: "\f",
            n: "\n",
            r: "\r",
            t: "	"
          };
          if (e !== void 0 && e in simple) {
            out += simple[e];
            i += 2;
          } else if (e === "u" && /^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) {
            out += String.fromCharCode(parseInt(text.slice(i + 2, i + 6), 16));
            i += 6;
          } else fail("Unknown escape in a string", i);
          continue;
        }
        if (text.charCodeAt(i) < 32) fail("A line break or control character inside a string", i);
        out += c;
        i++;
      }
    };
    const readValue = (path, key) => {
      skip();
      const start2 = i;
      let value;
      const c = text[i];
      if (c === "{") {
        i++;
        const obj2 = {};
        skip();
        if (text[i] === "}") i++;
        else {
          while (true) {
            skip();
            if (text[i] !== '"') {
              fail(`Expected a quoted field name, found ${describe(i)}`);
            }
            const keyStart = i;
            const name = readString();
            const keySpan = span(keyStart, i);
            skip();
            if (text[i] !== ":") fail(`Expected \u201C:\u201D after "${name}", found ${describe(i)}`);
            i++;
            obj2[name] = readValue([
              ...path,
              name
            ], keySpan);
            skip();
            if (text[i] === ",") {
              i++;
              continue;
            }
            if (text[i] === "}") {
              i++;
              break;
            }
            fail(`Expected \u201C,\u201D or \u201C}\u201D after the value of "${name}", found ${describe(i)}`);
          }
        }
        value = obj2;
      } else if (c === "[") {
        i++;
        const arr = [];
        skip();
        if (text[i] === "]") i++;
        else {
          while (true) {
            arr.push(readValue([
              ...path,
              arr.length
            ]));
            skip();
            if (text[i] === ",") {
              i++;
              continue;
            }
            if (text[i] === "]") {
              i++;
              break;
            }
            fail(`Expected \u201C,\u201D or \u201C]\u201D in a list, found ${describe(i)}`);
          }
        }
        value = arr;
      } else if (c === '"') {
        value = readString();
      } else {
        const m = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(text.slice(i, i + 64));
        if (m && m[0].length > 0 && text[i] !== void 0 && /[-0-9]/.test(text[i])) {
          value = Number(m[0]);
          i += m[0].length;
        } else if (text.startsWith("true", i)) {
          value = true;
          i += 4;
        } else if (text.startsWith("false", i)) {
          value = false;
          i += 5;
        } else if (text.startsWith("null", i)) {
          value = null;
          i += 4;
        } else {
          fail(`Expected a value, found ${describe(i)}`);
        }
      }
      spans.set(pathKey(path), {
        value: span(start2, i),
        ...key ? {
          key
        } : {}
      });
      return value;
    };
    try {
      const value = readValue([]);
      skip();
      if (i < text.length) fail(`Unexpected ${describe(i)} after the end of the JSON value`);
      return {
        ok: true,
        value,
        spans
      };
    } catch (error) {
      if (error instanceof JsonSyntaxError) {
        const at = Math.min(error.offset, text.length);
        return {
          ok: false,
          message: error.message,
          span: span(at, Math.min(at + 1, text.length))
        };
      }
      throw error;
    }
  }
  function spanForPath(spans, path) {
    for (let n = path.length; n >= 0; n--) {
      const found = spans.get(pathKey(path.slice(0, n)));
      if (found) {
        if (found.key) {
          return {
            ...found.key,
            end: found.value.end
          };
        }
        return found.value;
      }
    }
    return {
      start: 0,
      end: 0,
      line: 1,
      column: 1
    };
  }

  // src/page/editor_issues.ts
  function placeIssues(text, issues) {
    const located = locateJson(text);
    const spans = located.ok ? located.spans : /* @__PURE__ */ new Map();
    return issues.map((i) => ({
      ...i,
      span: spanForPath(spans, i.path)
    })).sort((a, b) => a.span.start - b.span.start);
  }
  function checkJsonSyntax(text) {
    const located = locateJson(text);
    if (located.ok) return {
      ok: true,
      value: located.value
    };
    return {
      ok: false,
      syntax: true,
      issues: [
        {
          at: `line ${located.span.line}, column ${located.span.column}`,
          path: [],
          code: "invalid_json",
          message: located.message,
          span: located.span
        }
      ]
    };
  }

  // src/page/layout_drawing.ts
  function median(values) {
    if (values.length === 0) return NaN;
    const s = [
      ...values
    ].sort((a, b) => a - b);
    const m = Math.floor(s.length / 2);
    return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
  }
  function runnerWidthMm(r) {
    return r.width_mm ?? r.diameter_mm;
  }
  function gateSizeMm(g) {
    return g.type === "edge" ? g.thickness_mm ?? 1 : g.diameter_mm ?? 1;
  }
  function layoutGeometry(scenario, sizes = /* @__PURE__ */ new Map()) {
    const nodes = new Map(scenario.nodes.map((n) => [
      n.id,
      {
        x: n.x_mm,
        y: n.y_mm
      }
    ]));
    const runners = (scenario.runners ?? []).flatMap((r) => {
      const a = nodes.get(r.from), b = nodes.get(r.to);
      if (!a || !b) return [];
      const size = sizes.get(r.id);
      const width = size !== void 0 && r.width_mm === void 0 ? size : runnerWidthMm(r);
      return [
        {
          id: r.id,
          x1: a.x,
          y1: a.y,
          x2: b.x,
          y2: b.y,
          width_mm: width
        }
      ];
    });
    const lengths = runners.map((r) => Math.hypot(r.x2 - r.x1, r.y2 - r.y1)).filter((l) => l > 0);
    const xsAll = [
      ...nodes.values()
    ].map((n) => n.x);
    const ysAll = [
      ...nodes.values()
    ].map((n) => n.y);
    const spread = Math.max(Math.max(...xsAll) - Math.min(...xsAll), Math.max(...ysAll) - Math.min(...ysAll));
    const typical = Number.isFinite(median(lengths)) ? median(lengths) : spread > 0 ? spread / 3 : 30;
    const centre = {
      x: xsAll.reduce((a, b) => a + b, 0) / xsAll.length,
      y: ysAll.reduce((a, b) => a + b, 0) / ysAll.length
    };
    const arrival = /* @__PURE__ */ new Map();
    for (const r of scenario.runners ?? []) {
      const a = nodes.get(r.from), b = nodes.get(r.to);
      if (!a || !b) continue;
      const l = Math.hypot(b.x - a.x, b.y - a.y);
      if (l === 0) continue;
      const v = arrival.get(r.to) ?? {
        x: 0,
        y: 0
      };
      arrival.set(r.to, {
        x: v.x + (b.x - a.x) / l,
        y: v.y + (b.y - a.y) / l
      });
    }
    const gap = Math.max(3, 0.15 * typical);
    const vMax = Math.max(...scenario.cavities.map((c) => c.volume_cm3), 1e-9);
    let k = 0.45 * typical / Math.sqrt(vMax);
    const direction = (cavityId) => {
      const gateNodes = scenario.gates.filter((g) => g.cavity === cavityId).flatMap((g) => {
        const n = nodes.get(g.from);
        return n ? [
          {
            id: g.from,
            ...n
          }
        ] : [];
      });
      if (gateNodes.length === 0) return {
        at: centre,
        d: {
          x: 0,
          y: 1
        }
      };
      const at = {
        x: gateNodes.reduce((a, n) => a + n.x, 0) / gateNodes.length,
        y: gateNodes.reduce((a, n) => a + n.y, 0) / gateNodes.length
      };
      let d = gateNodes.reduce((acc, n) => {
        const v = arrival.get(n.id) ?? {
          x: 0,
          y: 0
        };
        return {
          x: acc.x + v.x,
          y: acc.y + v.y
        };
      }, {
        x: 0,
        y: 0
      });
      if (Math.hypot(d.x, d.y) < 1e-6) d = {
        x: at.x - centre.x,
        y: at.y - centre.y
      };
      if (Math.hypot(d.x, d.y) < 1e-6) d = {
        x: 0,
        y: 1
      };
      const l = Math.hypot(d.x, d.y);
      return {
        at,
        d: {
          x: d.x / l,
          y: d.y / l
        }
      };
    };
    const dirs = new Map(scenario.cavities.map((c) => [
      c.id,
      direction(c.id)
    ]));
    let placed = [];
    for (let attempt = 0; attempt < 30; attempt++) {
      placed = scenario.cavities.map((c) => {
        const r = k * Math.sqrt(c.volume_cm3);
        const { at, d } = dirs.get(c.id);
        if (typeof c.x_mm === "number" && typeof c.y_mm === "number") {
          const away = {
            x: c.x_mm - at.x,
            y: c.y_mm - at.y
          };
          const l = Math.hypot(away.x, away.y);
          return {
            id: c.id,
            ...c.name ? {
              name: c.name
            } : {},
            volume_cm3: c.volume_cm3,
            x: c.x_mm,
            y: c.y_mm,
            r,
            dx: l > 0 ? away.x / l : d.x,
            dy: l > 0 ? away.y / l : d.y
          };
        }
        return {
          id: c.id,
          ...c.name ? {
            name: c.name
          } : {},
          volume_cm3: c.volume_cm3,
          x: at.x + d.x * (gap + r),
          y: at.y + d.y * (gap + r),
          r,
          dx: d.x,
          dy: d.y
        };
      });
      let overlap = false;
      for (let i = 0; i < placed.length && !overlap; i++) {
        for (let j = i + 1; j < placed.length; j++) {
          const a = placed[i], b = placed[j];
          if (Math.hypot(a.x - b.x, a.y - b.y) < (a.r + b.r) * 1.08) {
            overlap = true;
            break;
          }
        }
      }
      if (!overlap) break;
      k *= 0.85;
    }
    const cavityById = new Map(placed.map((c) => [
      c.id,
      c
    ]));
    const gates = scenario.gates.flatMap((g) => {
      const n = nodes.get(g.from), c = cavityById.get(g.cavity);
      if (!n || !c) return [];
      const l = Math.hypot(c.x - n.x, c.y - n.y);
      const t = l > 0 ? Math.max(0, (l - c.r) / l) : 0;
      return [
        {
          id: g.id,
          x1: n.x,
          y1: n.y,
          x2: n.x + (c.x - n.x) * t,
          y2: n.y + (c.y - n.y) * t,
          size_mm: sizes.get(g.id) ?? gateSizeMm(g)
        }
      ];
    });
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    const grow = (x, y, pad) => {
      x0 = Math.min(x0, x - pad);
      x1 = Math.max(x1, x + pad);
      y0 = Math.min(y0, y - pad);
      y1 = Math.max(y1, y + pad);
    };
    for (const n of nodes.values()) grow(n.x, n.y, 4);
    for (const c of placed) grow(c.x, c.y, c.r);
    return {
      nodes,
      cavities: placed,
      gates,
      runners,
      bounds: {
        x0,
        y0,
        x1,
        y1
      }
    };
  }
  var DRAWING_SCALES = [
    10,
    5,
    2,
    1,
    1 / 2,
    1 / 5,
    1 / 10,
    1 / 20,
    1 / 50
  ];
  function printScale(widthMm, heightMm, box) {
    const scale = DRAWING_SCALES.find((k) => widthMm * k <= box.maxWidthMm && heightMm * k <= box.maxHeightMm) ?? DRAWING_SCALES[DRAWING_SCALES.length - 1];
    return {
      scale,
      ratio: scale >= 1 ? `${scale}:1` : `1:${Math.round(1 / scale)}`
    };
  }
  function segmentBoxDistance(ax, ay, bx, by, box) {
    const n = Math.max(2, Math.ceil(Math.hypot(bx - ax, by - ay) / Math.max(box.hh, 0.5)));
    let best = Infinity;
    for (let k = 0; k <= n; k++) {
      const x = ax + (bx - ax) * k / n, y = ay + (by - ay) * k / n;
      const dx = Math.max(Math.abs(x - box.x) - box.hw, 0);
      const dy = Math.max(Math.abs(y - box.y) - box.hh, 0);
      best = Math.min(best, Math.hypot(dx, dy));
    }
    return best;
  }
  function circleBoxOverlap(cx, cy, r, box) {
    const dx = Math.max(Math.abs(cx - box.x) - box.hw, 0);
    const dy = Math.max(Math.abs(cy - box.y) - box.hh, 0);
    return Math.hypot(dx, dy) < r;
  }
  function layoutSvg(scenario, options = {}) {
    const unit = options.lengthUnit ?? "mm";
    const changes = new Map((options.changes ?? []).map((c) => [
      c.element,
      c
    ]));
    const sizes = new Map([
      ...changes.values()
    ].map((c) => [
      c.element,
      c.to_mm
    ]));
    const geo = layoutGeometry(scenario, sizes);
    const { x0, y0, x1, y1 } = geo.bounds;
    const span = Math.max(x1 - x0, y1 - y0, 10);
    const font = span / 40;
    const f = (v) => (Math.round(v * 1e3) / 1e3).toString();
    const size = (mm, prefix) => `${prefix}${formatLength(mm, unit)}`;
    const label = (id, currentMm, prefix) => {
      const c = changes.get(id);
      if (!c) return `${id} ${size(currentMm, prefix)}`;
      return `${id} ${size(c.from_mm, prefix)} \u2192 ${formatLength(c.to_mm, unit)}`;
    };
    const charWidth = font * 0.6;
    const lineHeight = font * 1.25;
    const halfSize = (tag) => ({
      hw: (Math.max(...tag.lines.map((l) => l.length)) * charWidth + (tag.badge ? font * 1.9 : 0)) / 2 + font * 0.15,
      hh: tag.lines.length * lineHeight / 2
    });
    const segments = [
      ...geo.runners.map((r) => ({
        ...r,
        half: r.width_mm / 2
      })),
      ...geo.gates.map((g) => ({
        ...g,
        half: Math.max(g.size_mm, font * 0.25) / 2
      }))
    ];
    const placed = [];
    const feedNode = geo.nodes.get(scenario.feed.node);
    const feedD = scenario.feed.kind === "sprue" ? scenario.feed.exit_diameter_mm ?? 5 : scenario.feed.diameter_mm ?? 5;
    const cost = (box) => {
      let c = 0;
      for (const p of placed) {
        if (Math.abs(p.x - box.x) < p.hw + box.hw && Math.abs(p.y - box.y) < p.hh + box.hh) c += 4;
      }
      for (const cav of geo.cavities) if (circleBoxOverlap(cav.x, cav.y, cav.r, box)) c += 3;
      for (const sgm of segments) {
        if (segmentBoxDistance(sgm.x1, sgm.y1, sgm.x2, sgm.y2, box) < sgm.half + font * 0.1) c += 2;
      }
      if (feedNode && circleBoxOverlap(feedNode.x, feedNode.y, feedD / 2 + font * 0.5, box)) c += 2;
      return c;
    };
    const gapMm = font * 0.12;
    const hitsLabel = (box) => placed.some((p) => Math.abs(p.x - box.x) < p.hw + box.hw + gapMm && Math.abs(p.y - box.y) < p.hh + box.hh + gapMm);
    const leaders = /* @__PURE__ */ new Map();
    const place = (tag) => {
      const { hw, hh } = halfSize(tag);
      let best = null, bestCost = Infinity;
      for (const c of tag.candidates) {
        const box = {
          x: c.x,
          y: c.y,
          hw,
          hh
        };
        if (hitsLabel(box)) continue;
        const k = cost(box);
        if (k < bestCost) {
          best = box;
          bestCost = k;
          if (k === 0) break;
        }
      }
      if (best === null || bestCost > 0) {
        const at = tag.anchor ?? tag.candidates[0] ?? {
          x: 0,
          y: 0
        };
        let spiral = null, spiralCost = Infinity;
        for (let ring = 1; ring <= 80 && spiralCost > 0; ring++) {
          const r = ring * font * 0.8;
          const count = 12 + ring * 2;
          for (let k = 0; k < count; k++) {
            const a = 2 * Math.PI * k / count;
            const box = {
              x: at.x + Math.cos(a) * (r + hw),
              y: at.y + Math.sin(a) * (r + hh),
              hw,
              hh
            };
            if (hitsLabel(box)) continue;
            const c = cost(box);
            if (c < spiralCost) {
              spiral = box;
              spiralCost = c;
              if (c === 0) break;
            }
          }
        }
        if (spiral && (best === null || spiralCost < bestCost)) {
          best = spiral;
          leaders.set(spiral, at);
        }
      }
      if (best === null) {
        const low = Math.min(...placed.map((p) => p.y - p.hh), y0) - hh - font;
        best = {
          x: tag.anchor?.x ?? 0,
          y: low,
          hw,
          hh
        };
        leaders.set(best, tag.anchor ?? {
          x: best.x,
          y: best.y
        });
      }
      placed.push(best);
      return best;
    };
    const boxAttr = (box) => ` data-box="${f(box.x - box.hw)} ${f(-(box.y + box.hh))} ${f(box.x + box.hw)} ${f(-(box.y - box.hh))}"`;
    const tagSvg = (tag, box) => {
      if (box === null) return "";
      const left = box.x - box.hw + font * 0.15;
      let out2 = `<g class="tag"${boxAttr(box)}>`;
      const anchor = leaders.get(box);
      if (anchor) {
        const ex = Math.max(box.x - box.hw, Math.min(anchor.x, box.x + box.hw));
        const ey = Math.max(box.y - box.hh, Math.min(anchor.y, box.y + box.hh));
        out2 += `<line class="leader" x1="${f(anchor.x)}" y1="${f(-anchor.y)}" x2="${f(ex)}" y2="${f(-ey)}"/>`;
      }
      let textX = box.x;
      if (tag.badge !== void 0) {
        const bx = left + font * 0.8;
        out2 += `<g class="step-badge"><circle cx="${f(bx)}" cy="${f(-box.y)}" r="${f(font * 0.8)}"/><text x="${f(bx)}" y="${f(-box.y)}" text-anchor="middle" dy="0.35em">${tag.badge}</text></g>`;
        textX = box.x + font * 0.95;
      }
      const top = box.y + box.hh - lineHeight / 2;
      tag.lines.forEach((line, k) => {
        out2 += `<text class="label${tag.strong && k === 0 ? " strong" : ""}" x="${f(textX)}" y="${f(-(top - k * lineHeight))}" text-anchor="middle" dy="0.35em">${escapeXml(line)}</text>`;
      });
      return out2 + "</g>";
    };
    const besideSegment = (ax, ay, bx, by, half, tag, shifts) => {
      const { hw, hh } = halfSize(tag);
      const l = Math.hypot(bx - ax, by - ay) || 1;
      const tx = (bx - ax) / l, ty = (by - ay) / l;
      let nx = -ty, ny = tx;
      if (ny < 0 || ny === 0 && nx < 0) [nx, ny] = [
        -nx,
        -ny
      ];
      const extent2 = Math.abs(nx) * hw + Math.abs(ny) * hh;
      const reach = half + font * 0.35 + extent2;
      const mx = (ax + bx) / 2, my = (ay + by) / 2;
      const out2 = [];
      for (const ring of [
        0,
        1,
        2
      ]) {
        const r = reach + ring * (2 * extent2 + font * 0.4);
        for (const s of shifts) {
          for (const side of [
            1,
            -1
          ]) {
            out2.push({
              x: mx + tx * s * l + nx * side * r,
              y: my + ty * s * l + ny * side * r
            });
          }
        }
      }
      return out2;
    };
    const body = [];
    const channels = {
      runner: [],
      gate: []
    };
    const feedBody = [];
    const labels = [];
    const jobs = [];
    const defer = (priority, run) => jobs.push({
      priority,
      order: jobs.length,
      run
    });
    if (feedNode) {
      const text = scenario.feed.kind === "sprue" ? `sprue \u2300${formatLength(scenario.feed.entry_diameter_mm ?? feedD, unit)}\u2013${formatLength(feedD, unit)}` : `hot drop \u2300${formatLength(feedD, unit)}`;
      const tag = {
        lines: [
          text
        ],
        strong: false,
        candidates: [],
        anchor: feedNode
      };
      const { hw, hh } = halfSize(tag);
      const free = freeDirection(geo, scenario.feed.node);
      for (const turn of [
        0,
        0.5,
        -0.5,
        1,
        -1,
        1.5,
        -1.5,
        Math.PI
      ]) {
        const a = free + turn;
        const reach = feedD / 2 + font * 0.7;
        tag.candidates.push({
          x: feedNode.x + Math.cos(a) * (reach + hw),
          y: feedNode.y + Math.sin(a) * (reach + hh)
        });
      }
      feedBody.push(`<g class="feed"><circle cx="${f(feedNode.x)}" cy="${f(-feedNode.y)}" r="${f(feedD / 2)}"/><circle class="feed-ring" cx="${f(feedNode.x)}" cy="${f(-feedNode.y)}" r="${f(feedD / 2 + font * 0.5)}"/></g>`);
      defer(3, () => labels.push(`<g class="feed-label">${tagSvg(tag, place(tag))}</g>`));
    }
    for (const c of geo.cavities) {
      const title = `${c.id}${c.name ? ` ${c.name}` : ""}`;
      const volume = formatVolume(c.volume_cm3, {
        ...METRIC_UNITS,
        length: unit
      });
      const fits = (text2) => c.r * 2 > charWidth * 1.05 * Math.max(text2.length, 3);
      const inside = fits(title) && fits(volume) && c.r > font * 1.4;
      const idInside = !inside && fits(c.id) && c.r > font * 0.8;
      let text = "";
      if (inside) {
        const box = {
          x: c.x,
          y: c.y - font * 0.4,
          ...halfSize({
            lines: [
              title,
              volume
            ]
          })
        };
        placed.push(box);
        text = `<g class="tag inside"${boxAttr(box)}><text x="${f(c.x)}" y="${f(-c.y)}" text-anchor="middle" dy="-0.2em" class="label strong">${escapeXml(title)}</text><text x="${f(c.x)}" y="${f(-c.y)}" text-anchor="middle" dy="1.0em" class="label">${escapeXml(volume)}</text></g>`;
      } else {
        if (idInside) {
          const box = {
            x: c.x,
            y: c.y,
            ...halfSize({
              lines: [
                c.id
              ]
            })
          };
          placed.push(box);
          text = `<g class="tag inside"${boxAttr(box)}><text x="${f(c.x)}" y="${f(-c.y)}" text-anchor="middle" dy="0.35em" class="label strong">${escapeXml(c.id)}</text></g>`;
        }
        const lines = idInside ? c.name ? [
          c.name,
          volume
        ] : [
          volume
        ] : [
          title,
          volume
        ];
        const tag = {
          lines,
          strong: !idInside,
          candidates: [],
          anchor: {
            x: c.x + c.dx * c.r,
            y: c.y + c.dy * c.r
          }
        };
        const { hw, hh } = halfSize(tag);
        for (const turn of [
          0,
          0.6,
          -0.6,
          1.2,
          -1.2,
          Math.PI / 2,
          -Math.PI / 2,
          2.2,
          -2.2
        ]) {
          const a = Math.atan2(c.dy, c.dx) + turn;
          const ux = Math.cos(a), uy = Math.sin(a);
          const reach = c.r + font * 0.3 + Math.abs(ux) * hw + Math.abs(uy) * hh;
          tag.candidates.push({
            x: c.x + ux * reach,
            y: c.y + uy * reach
          });
        }
        defer(2, () => labels.push(`<g class="cavity-label" data-for="${escapeXml(c.id)}">${tagSvg(tag, place(tag))}</g>`));
      }
      body.push(`<g class="cavity" data-id="${escapeXml(c.id)}"><circle cx="${f(c.x)}" cy="${f(-c.y)}" r="${f(c.r)}"/>${text}</g>`);
    }
    const channel = (kind, id, seg, width, text, shifts) => {
      const changed = changes.get(id);
      const tag = {
        lines: [
          text
        ],
        strong: changed !== void 0,
        ...changed ? {
          badge: changed.step
        } : {},
        candidates: [],
        anchor: {
          x: (seg.x1 + seg.x2) / 2,
          y: (seg.y1 + seg.y2) / 2
        }
      };
      tag.candidates = besideSegment(seg.x1, seg.y1, seg.x2, seg.y2, width / 2, tag, shifts);
      if (kind === "gate") {
        const { hw } = halfSize(tag);
        const atNode = geo.runners.filter((r) => r.x1 === seg.x1 && r.y1 === seg.y1 || r.x2 === seg.x1 && r.y2 === seg.y1);
        const clear = Math.max(width / 2, ...atNode.map((r) => r.width_mm / 2)) + font * 0.4;
        const mx = (seg.x1 + seg.x2) / 2, my = (seg.y1 + seg.y2) / 2;
        const near = [];
        for (const dy of [
          0,
          1,
          -1,
          2,
          -2
        ]) {
          for (const side of [
            1,
            -1
          ]) {
            near.push({
              x: mx + side * (clear + hw),
              y: my + dy * lineHeight
            });
          }
        }
        tag.candidates.splice(shifts.length * 2, 0, ...near);
      }
      const slot = channels[kind].push("") - 1;
      defer(kind === "gate" ? 0 : 1, () => {
        const box = place(tag);
        channels[kind][slot] = `<g class="${kind}${changed ? " changed" : ""}" data-id="${escapeXml(id)}">` + (changed ? `<line class="halo" x1="${f(seg.x1)}" y1="${f(-seg.y1)}" x2="${f(seg.x2)}" y2="${f(-seg.y2)}" stroke-width="${f(width + font * 0.8)}"/>` : "") + `<line class="body" x1="${f(seg.x1)}" y1="${f(-seg.y1)}" x2="${f(seg.x2)}" y2="${f(-seg.y2)}" stroke-width="${f(width)}"/>` + tagSvg(tag, box) + `</g>`;
      });
    };
    for (const g of geo.gates) {
      const gate = scenario.gates.find((x) => x.id === g.id);
      const prefix = gate.type === "edge" ? "t " : "\u2300";
      const text = gate.type === "edge" && gate.width_mm ? `${label(g.id, g.size_mm, prefix)} \xD7 ${formatLength(gate.width_mm, unit)}` : label(g.id, g.size_mm, prefix);
      channel("gate", g.id, g, Math.max(g.size_mm, font * 0.25), text, [
        0,
        -0.5,
        0.5,
        -1.5,
        1.5
      ]);
    }
    for (const r of geo.runners) {
      channel("runner", r.id, r, r.width_mm, label(r.id, r.width_mm, "\u2300"), [
        0,
        0.3,
        -0.3,
        0.6,
        -0.6
      ]);
    }
    jobs.sort((a, b) => a.priority - b.priority || a.order - b.order).forEach((j) => j.run());
    let bx0 = x0, bx1 = x1, by0 = y0, by1 = y1;
    for (const b of placed) {
      bx0 = Math.min(bx0, b.x - b.hw);
      bx1 = Math.max(bx1, b.x + b.hw);
      by0 = Math.min(by0, b.y - b.hh);
      by1 = Math.max(by1, b.y + b.hh);
    }
    const pad = font * 1.5;
    const vx0 = bx0 - pad, vx1 = bx1 + pad;
    const vy0 = -by1 - pad, vy1 = -by0 + pad + font * 3;
    const stepMm = niceLengthStep(span / 4, unit);
    const sx = vx0 + pad, sy = vy1 - font * 1.2;
    const printed = options.print ? printScale(vx1 - vx0, vy1 - vy0, options.print) : null;
    const out = [];
    out.push(`<svg xmlns="http://www.w3.org/2000/svg" class="layout" ${options.id ? `id="${escapeXml(options.id)}" ` : ""}viewBox="${f(vx0)} ${f(vy0)} ${f(vx1 - vx0)} ${f(vy1 - vy0)}"${printed ? ` data-scale="${printed.ratio}" style="--print-width:${f((vx1 - vx0) * printed.scale)}mm"` : ""} role="img" aria-label="Layout drawing of the runner system">`, `<g font-size="${f(font)}" class="layout-body">`, ...body, ...channels.runner, ...channels.gate, ...feedBody, ...labels, `<g class="scale-bar"><path d="M${f(sx)},${f(sy - font * 0.4)}V${f(sy)}H${f(sx + stepMm)}V${f(sy - font * 0.4)}"/><text class="label" x="${f(sx + stepMm + font * 0.5)}" y="${f(sy)}">${formatLength(stepMm, unit).replace(/\.0+$/, "")} ${unit === "mm" ? "mm" : "in"}${printed ? ` \xB7 scale ${printed.ratio} printed at 100 %` : ""}</text></g>`, `</g></svg>`);
    return out.join("");
  }
  function freeDirection(geo, nodeId) {
    const n = geo.nodes.get(nodeId);
    if (!n) return -Math.PI / 2;
    const angles = [];
    for (const r of geo.runners) {
      if (r.x1 === n.x && r.y1 === n.y) angles.push(Math.atan2(r.y2 - r.y1, r.x2 - r.x1));
      else if (r.x2 === n.x && r.y2 === n.y) angles.push(Math.atan2(r.y1 - r.y2, r.x1 - r.x2));
    }
    for (const g of geo.gates) {
      if (g.x1 === n.x && g.y1 === n.y) angles.push(Math.atan2(g.y2 - g.y1, g.x2 - g.x1));
    }
    if (angles.length === 0) return -Math.PI / 2;
    angles.sort((a, b) => a - b);
    let best = -Math.PI / 2, widest = -1;
    for (let k = 0; k < angles.length; k++) {
      const a = angles[k];
      const b = k + 1 < angles.length ? angles[k + 1] : angles[0] + 2 * Math.PI;
      const score = b - a - 1e-3 * Math.sin((a + b) / 2);
      if (score > widest) {
        widest = score;
        best = (a + b) / 2;
      }
    }
    return best;
  }
  function layoutKeyText(unit) {
    return `Plan view to scale from the node coordinates; sizes in ${unit === "mm" ? "mm" : "inch"}. \u2300 diameter; t gate thickness \xD7 width. Runners at their true width; cavity circles by volume (placed beyond their gates). Changed elements: dashed outline, before \u2192 after, step number.`;
  }
  function niceLengthStep(approxMm, unit) {
    const inUnit = lengthFromMm(approxMm, unit);
    const step = niceStep(0, inUnit, 1);
    return lengthToMm(step, unit);
  }

  // src/page/results_view.ts
  function primary(shown) {
    return shown.kind === "simulation" ? shown.result : shown.result.after;
  }
  var num = (v, digits = 3) => formatNumber(v, digits);
  function cell(value, text, attrs, extraClass = "") {
    const a = Object.entries(attrs).map(([k, v]) => ` data-${k}="${escapeXml(v)}"`).join("");
    return `<td class="num${extraClass ? ` ${extraClass}` : ""}"${a} data-value="${value === null || value === void 0 ? "" : String(value)}">${escapeXml(text)}</td>`;
  }
  function scrollBox(table) {
    return `<div class="table-scroll" tabindex="0">${table}</div>`;
  }
  function velocityPhase(result) {
    const history2 = result.history ?? [];
    const sw = result.switchover_time_s;
    if (sw === null || sw === void 0 || !Number.isFinite(sw)) return history2;
    const out = [];
    for (let k = 0; k < history2.length; k++) {
      const h = history2[k];
      const t = h.time_s ?? NaN;
      if (t <= sw * (1 + 1e-9)) {
        out.push(h);
        continue;
      }
      const prev = out[out.length - 1];
      const t0 = prev?.time_s ?? NaN;
      if (prev && Number.isFinite(t0) && t0 < sw * (1 - 1e-9) && t > t0) {
        const w = (sw - t0) / (t - t0);
        const mix = (a, b) => a === null || a === void 0 || b === null || b === void 0 ? null : a + (b - a) * w;
        out.push({
          time_s: sw,
          injected_cm3: mix(prev.injected_cm3, h.injected_cm3),
          feed_pressure_MPa: mix(prev.feed_pressure_MPa, h.feed_pressure_MPa),
          clamp_force_kN: mix(prev.clamp_force_kN, h.clamp_force_kN),
          cavity_fill_percent: h.cavity_fill_percent.map((f, i) => mix(prev.cavity_fill_percent[i], f))
        });
      }
      break;
    }
    return out;
  }
  function fillsAfterSwitchover(c, result) {
    const sw = result.switchover_time_s;
    return typeof sw === "number" && typeof c.fill_time_s === "number" && c.fill_time_s > sw * (1 + 1e-9);
  }
  function summaryHtml(shown, ctx) {
    const r = primary(shown);
    const b = shown.kind === "optimization" ? shown.result.before : null;
    const u = ctx.units;
    const m = ctx.scenario.machine;
    const target = ctx.scenario.goals?.max_imbalance_percent;
    const swPercent = ctx.scenario.process?.switchover_percent ?? 98;
    const item = (key, label, value, before, note, raw) => `<div class="figure" data-figure="${key}" data-value="${raw ?? ""}"><dt>${escapeXml(label)}</dt><dd>${before !== null ? `<span class="before">${escapeXml(before)} \u2192</span> ` : ""}<strong>${escapeXml(value)}</strong><small>${escapeXml(note)}</small></dd></div>`;
    const pct = (v) => `${num(v, 3)} %`;
    const late = r.cavities.filter((c) => fillsAfterSwitchover(c, r));
    return `<dl class="figures">` + item("imbalance", "Fill-time imbalance", pct(r.imbalance_percent), b ? pct(b.imbalance_percent) : null, target !== void 0 ? `target \u2264 ${target} %` : "", r.imbalance_percent) + item("pressure", "Peak injection pressure (at switchover)", formatPressure(r.feed_pressure_peak_MPa, u), b ? formatPressure(b.feed_pressure_peak_MPa, u) : null, `press limit ${formatPressure(m.max_injection_pressure_MPa, u)} (${num(r.machine_pressure_share_percent, 3)} % used)`, r.feed_pressure_peak_MPa) + item("clamp", "Peak clamp force (at switchover)", formatForce(r.clamp_force_peak_kN, u), b ? formatForce(b.clamp_force_peak_kN, u) : null, `press rating ${formatForce(m.clamp_force_kN, u)} (${num(r.clamp_share_percent, 3)} % used)`, r.clamp_force_peak_kN) + item("runner", "Cold runner per shot", formatMass(r.runner_mass_g, u), b ? formatMass(b.runner_mass_g, u) : null, `${formatVolume(r.runner_volume_cm3, u)}, ${num(r.runner_share_percent, 3)} % of the ${formatMass(r.shot_mass_g, u, 4)} shot`, r.runner_mass_g) + item("switchover", `Switchover (${swPercent} % of the shot)`, `${num(r.switchover_time_s, 3)} s`, b ? `${num(b.switchover_time_s, 3)} s` : null, late.length ? `${late.map((c) => `${c.id} ${num(c.fill_percent_at_switchover, 3)} %`).join(", ")} full then; the hold phase finishes ${late.length === 1 ? "it" : "them"}` : "every cavity full by then", r.switchover_time_s) + item("fill-time", "Fill time (set rate held to the end)", `${num(r.fill_time_s, 3)} s`, b ? `${num(b.fill_time_s, 3)} s` : null, (late.length ? "past switchover: a model figure for balance, not a press time. " : "") + (r.freeze?.part_cooling_time_s ? `Part cooling \u2248 ${num(r.freeze.part_cooling_time_s, 3)} s` : ""), r.fill_time_s) + `</dl>`;
  }
  function cavityTableHtml(shown, units = METRIC_UNITS) {
    const after = primary(shown);
    const before = shown.kind === "optimization" ? shown.result.before : null;
    const beforeById = new Map((before?.cavities ?? []).map((c) => [
      c.id,
      c
    ]));
    const which = before ? [
      "before",
      "after"
    ] : [
      "result"
    ];
    const head2 = (label) => before ? `<th scope="colgroup" colspan="2">${label}</th>` : `<th scope="col">${label}</th>`;
    const columns = [
      "fill time",
      "fill % at switchover",
      "fill % first full",
      "gate shear",
      "mass"
    ];
    const sub = before ? `<tr class="sub">${columns.map(() => `<th scope="col">before</th><th scope="col">after</th>`).join("")}</tr>` : "";
    let anyLate = false;
    const rows = after.cavities.map((c) => {
      const bc = beforeById.get(c.id);
      const resultOf = (w) => w === "before" ? before : after;
      const pair = (field, text, cls) => which.map((w) => {
        const x = w === "before" ? bc : c;
        if (!x) return "<td>\u2013</td>";
        const r = resultOf(w);
        return cell(x[field], text(x, r), {
          cavity: c.id,
          field: String(field),
          which: w
        }, cls ? cls(x, r) : "");
      }).join("");
      const shear = (x) => {
        const ratio = x.gate_shear_rate_peak_1_s !== null && x.gate_shear_limit_1_s ? x.gate_shear_rate_peak_1_s / x.gate_shear_limit_1_s : null;
        return `${num(x.gate_shear_rate_peak_1_s, 3)} (${ratio === null ? "\u2013" : Math.round(ratio * 100)} %)`;
      };
      const over = (x) => x.gate_shear_rate_peak_1_s !== null && x.gate_shear_limit_1_s !== null && x.gate_shear_rate_peak_1_s > x.gate_shear_limit_1_s ? "over" : "";
      const late = (x, r) => {
        const isLate = fillsAfterSwitchover(x, r);
        anyLate ||= isLate;
        return isLate ? "late" : "";
      };
      return `<tr data-cavity="${escapeXml(c.id)}"><th scope="row">${escapeXml(c.id)}${c.name ? ` <span class="muted">${escapeXml(c.name)}</span>` : ""}</th>` + pair("fill_time_s", (x) => num(x.fill_time_s, 4), late) + pair("fill_percent_at_switchover", (x) => num(x.fill_percent_at_switchover, 4)) + pair("fill_percent_at_first_full", (x) => num(x.fill_percent_at_first_full, 4)) + pair("gate_shear_rate_peak_1_s", shear, over) + pair("mass_g", (x) => formatMass(x.mass_g, units, 4)) + `<td class="num">${num(c.gate_shear_limit_1_s, 3)}</td></tr>`;
    }).join("");
    return scrollBox(`<table class="data cavities" id="cavity-table"><caption>Per cavity${before ? ": before \u2192 after" : ""}</caption><thead><tr><th scope="col" rowspan="${before ? 2 : 1}">cavity</th>${head2("fill time, s")}${head2("fill % at switchover")}${head2("fill % when the first is full")}${head2("gate shear peak, 1/s (share of limit)")}${head2("part mass")}<th scope="col" rowspan="${before ? 2 : 1}">gate shear limit, 1/s</th></tr>${sub}</thead><tbody>${rows}</tbody></table>`) + `<p class="note">Shear over the resin's limit is marked <span class="over-key">\u25B2 over</span>.${anyLate ? ` <span class="late-key">\u2021</span> fills after switchover: the time assumes the set flow rate held on, which the press does not do; the hold phase fills the rest.` : ""}</p>`;
  }
  function changeSizeText(c, side, units) {
    const mm = side === "from" ? c.from_mm : c.to_mm;
    return units.length === "mm" ? `${formatLength(mm, "mm")} mm (${formatLength(mm, "in")} in)` : `${formatLength(mm, "in")} in (${formatLength(mm, "mm")} mm)`;
  }
  var ACTION_WORDS = {
    cut_to: {
      full: "cut to",
      short: "cut to"
    },
    enlarge: {
      full: "enlarge (steel-safe)",
      short: "enlarge"
    },
    add_steel: {
      full: "<strong>ADD STEEL</strong> (weld or insert)",
      short: "<strong>ADD STEEL</strong>"
    }
  };
  function changeSteps(changes) {
    const steps = [];
    for (const c of changes) {
      const last = steps[steps.length - 1];
      if (last && last.step === c.step) {
        last.changes.push(c);
        last.together = true;
        last.after = c.after_step;
        last.above_start ||= c.above_start;
        last.above_start_reason ??= c.above_start_reason;
      } else {
        steps.push({
          step: c.step,
          changes: [
            c
          ],
          together: c.cut_together,
          after: c.after_step,
          above_start: c.above_start,
          above_start_reason: c.above_start_reason
        });
      }
    }
    return steps;
  }
  var newTool = (changes) => changes.length > 0 && changes.every((c) => c.action === "cut_to");
  function omittedText(omitted) {
    if (!omitted) return "No change proposed.";
    return omitted === "not asked for" ? "No change list: it was not asked for." : `No change list: the run was ${omitted}. The sizes shown are the design it reached; run again for the order of work.`;
  }
  function shotAttrs(step, s) {
    return `data-step="${step}" data-cavity="${escapeXml(s.cavity)}" data-fill="${s.fill_percent}" data-mass-g="${s.mass_g}"`;
  }
  function shotCompact(step, state2, units) {
    if (state2.first_full_s === null || state2.short_shot.length === 0) return "not simulated";
    const sorted = [
      ...state2.short_shot
    ].sort((a, b) => b.fill_percent - a.fill_percent);
    const first = sorted[0], low = sorted[sorted.length - 1];
    return `<span ${shotAttrs(step, first)}>${escapeXml(first.cavity)} full</span> \xB7 <span ${shotAttrs(step, low)}>${escapeXml(low.cavity)} ${num(low.fill_percent, 3)} % ${escapeXml(formatMass(low.mass_g, units, 3))}</span>`;
  }
  function changeTableHtml(changes, units, options = {}) {
    const id = escapeXml(options.id ?? "change-table");
    if (changes.length === 0) {
      return `<p class="empty" id="${id}"${options.omitted ? ` data-omitted="true"` : ""}>${escapeXml(omittedText(options.omitted))}</p>`;
    }
    const fresh = newTool(changes);
    const steps = changeSteps(changes);
    const start2 = fresh ? null : options.start ?? null;
    const imbalance = (s, above) => `<td class="num${above ? " over" : ""}" data-field="imbalance" data-value="${s.imbalance_percent}"${above ? ' data-above-start="true"' : ""}>${num(s.imbalance_percent, 3)} %${s.limits_met ? "" : " *"}</td>`;
    const stepCell = (s, span) => `<td class="num step" rowspan="${span}" data-step-number="${s.step}">${s.step}${s.together ? `<br><span class="muted small" data-field="together">cut together</span>` : ""}</td>`;
    const reasons = steps.filter((s) => s.above_start);
    const reasonNote = (s) => `step ${s.step} is above today's imbalance${s.above_start_reason ? `: ${s.above_start_reason}` : ""}`;
    if (options.sheet) {
      const other = units.length === "mm" ? "in" : "mm";
      const span = (s) => fresh ? changes.length : s.changes.length;
      const rows2 = steps.map((s, k) => s.changes.map((c, i) => `<tr data-step="${c.step}" data-element="${escapeXml(c.element)}">` + (i === 0 ? stepCell(s, s.changes.length) : "") + `<th scope="row">${escapeXml(c.element)} <span class="muted">${escapeXml(c.dimension === "diameter" ? "\u2300" : c.dimension)}</span></th><td class="num" data-field="from" data-mm="${c.from_mm}">${formatLength(c.from_mm, units.length)}</td><td class="num" data-field="to" data-mm="${c.to_mm}"><strong>${formatLength(c.to_mm, units.length)} ${unitSymbol(units, "length")}</strong> <span class="muted">(${formatLength(c.to_mm, other)} ${other})</span></td><td data-field="cutter">${escapeXml(c.cutter)}</td><td>${escapeXml(c.mold_half)}</td><td data-field="steel" data-action="${c.action}">${ACTION_WORDS[c.action].short}</td>` + (i === 0 && (!fresh || k === 0) ? imbalance(s.after, s.above_start).replace("<td ", `<td rowspan="${span(s)}" `) + `<td class="shot" rowspan="${span(s)}" data-field="short-shot">${shotCompact(s.step, s.after, units)}</td><td class="tick-box" rowspan="${span(s)}" aria-label="done">\u2610</td>` : "") + `</tr>`).join("")).join("");
      const zero2 = start2 ? `<tr data-step="0" class="start"><td class="num step">0</td><th scope="row" colspan="6">today's tool, before any cut</th>${imbalance(start2, false)}<td class="shot" data-field="short-shot">${shotCompact(0, start2, units)}</td><td></td></tr>` : "";
      const words = fresh ? "\u201Ccut to\u201D: a new tool, cut as drawn; the figures are the design with every size cut." : "\u201Cenlarge\u201D: steel-safe, metal is removed; ADD STEEL: weld or insert first. \u25B2 above today's imbalance.";
      return `<table class="data changes sheet-steps" id="${id}"><thead><tr><th scope="col">step</th><th scope="col">element</th><th scope="col">${fresh ? "drawn" : "now"}, ${unitSymbol(units, "length")}</th><th scope="col">cut to</th><th scope="col">cutter</th><th scope="col">half</th><th scope="col">steel</th><th scope="col">imbalance ${fresh ? "all cut" : "after"}</th><th scope="col">short shot: first full \xB7 lowest</th><th scope="col">done</th></tr></thead><tbody>${zero2}${rows2}</tbody></table><p class="note">* limits not yet met. ${words}</p>` + (reasons.length ? `<ul class="note step-reasons">${reasons.map((s) => `<li data-step="${s.step}" data-above-start="true">${escapeXml(reasonNote(s))}</li>`).join("")}</ul>` : "");
    }
    const sizes = (c) => `<td class="num" data-field="from" data-mm="${c.from_mm}">${escapeXml(changeSizeText(c, "from", units))}</td><td class="num" data-field="to" data-mm="${c.to_mm}"><strong>${escapeXml(changeSizeText(c, "to", units))}</strong></td>`;
    const figures = (t, above, span) => [
      imbalance(t, above),
      `<td class="num" data-field="pressure" data-value="${t.feed_pressure_peak_MPa}">${escapeXml(formatPressure(t.feed_pressure_peak_MPa, units))}</td>`,
      `<td class="num" data-field="runner" data-value="${t.runner_volume_cm3}">${escapeXml(formatVolume(t.runner_volume_cm3, units))}</td>`,
      `<td>${t.limits_met ? "yes" : "no"}</td>`
    ].map((td) => td.replace("<td", `<td rowspan="${span}"`)).join("");
    const columns = 13;
    const rows = steps.map((s, k) => s.changes.map((c, i) => `<tr data-step="${c.step}" data-element="${escapeXml(c.element)}">` + (i === 0 ? stepCell(s, s.changes.length) : "") + `<th scope="row">${escapeXml(c.element)}</th><td>${escapeXml(c.kind)}, ${escapeXml(c.section)}</td><td>${escapeXml(c.dimension)}</td>` + sizes(c) + `<td data-field="cutter">${escapeXml(c.cutter)}</td><td data-field="steel" data-action="${c.action}">${ACTION_WORDS[c.action].full}</td><td>${escapeXml(c.mold_half)}</td>` + (i === 0 && (!fresh || k === 0) ? figures(s.after, s.above_start, fresh ? changes.length : s.changes.length) : "") + `</tr>`).join("") + (s.above_start ? `<tr class="step-note" data-step="${s.step}" data-above-start="true"><td colspan="${columns}">\u25B2 ${escapeXml(reasonNote(s))}</td></tr>` : "")).join("");
    const zero = start2 ? `<tr data-step="0" class="start"><td class="num step">0</td><th scope="row" colspan="8">today's tool, before any cut</th>${figures(start2, false, 1)}</tr>` : "";
    return scrollBox(`<table class="data changes" id="${id}"><caption>${fresh ? "Sizes to cut (a new tool: the figures are the design with every size cut)" : "Changes in order of work (each step simulated with every step before it)"}</caption><thead><tr><th scope="col">step</th><th scope="col">element</th><th scope="col">what</th><th scope="col">size</th><th scope="col">${fresh ? "drawn" : "before"}</th><th scope="col">${fresh ? "cut to" : "after"}</th><th scope="col">cutter</th><th scope="col">steel</th><th scope="col">mold half</th><th scope="col">imbalance after</th><th scope="col">peak pressure after</th><th scope="col">runner after</th><th scope="col">limits met</th></tr></thead><tbody>${zero}${rows}</tbody></table>`) + `<p class="note">* limits not yet met.</p>`;
  }
  function shortShotTableHtml(opt, units, id = "short-shot-table") {
    const fresh = newTool(opt.changes);
    const steps = changeSteps(opt.changes);
    const rows = [];
    if (opt.changes_start && !fresh) {
      rows.push({
        step: 0,
        label: "0 today",
        state: opt.changes_start
      });
    }
    if (fresh) {
      rows.push({
        step: steps.at(-1).step,
        label: "all cut",
        state: steps.at(-1).after
      });
    } else {
      for (const s of steps) rows.push({
        step: s.step,
        label: String(s.step),
        state: s.after
      });
    }
    const cavities = rows.find((r) => r.state.short_shot.length > 0)?.state.short_shot.map((s) => s.cavity) ?? [];
    if (rows.length === 0 || cavities.length === 0) return "";
    const body = rows.map((r) => {
      const byCavity = new Map(r.state.short_shot.map((s) => [
        s.cavity,
        s
      ]));
      const lowest = Math.min(...r.state.short_shot.map((s) => s.fill_percent));
      return `<tr data-step="${r.step}"><th scope="row">${escapeXml(r.label)}</th><td class="num">${r.state.first_full_s === null ? "not simulated" : `${num(r.state.first_full_s, 3)} s`}</td>` + cavities.map((cavity) => {
        const s = byCavity.get(cavity);
        if (!s) return "<td>\u2013</td>";
        const low = r.state.short_shot.length > 1 && s.fill_percent === lowest;
        return `<td class="num${low ? " low" : ""}" ${shotAttrs(r.step, s)}>${num(s.fill_percent, 3)} % <span class="muted">${escapeXml(formatMass(s.mass_g, units, 3))}</span></td>`;
      }).join("") + `</tr>`;
    }).join("");
    return scrollBox(`<table class="data short-shots" id="${escapeXml(id)}"><caption>Short shot to weigh after each step: each cavity's fill and mass when the first cavity is full (predicted)</caption><thead><tr><th scope="col">step</th><th scope="col">first full at</th>${cavities.map((c) => `<th scope="col">${escapeXml(c)}</th>`).join("")}</tr></thead><tbody>${body}</tbody></table>`) + `<p class="note">Set the shot size so that the first cavity just fills, weigh each part and compare with its row before cutting the next step.</p>`;
  }
  function frontTableHtml(opt, units) {
    if (opt.front.length === 0) return "";
    const rows = opt.front.map((p) => `<tr data-max-changes="${p.max_changes}" data-chosen="${p.chosen}"${p.chosen ? ' class="chosen"' : ""}><th scope="row">${p.max_changes === 0 ? "none" : `up to ${p.max_changes}`}</th><td data-field="changed">${p.changed.length ? escapeXml(p.changed.join(", ")) : "none"}</td>` + cell(p.imbalance_percent, `${num(p.imbalance_percent, 3)} %`, {
      field: "imbalance"
    }) + cell(p.runner_mass_g, formatMass(p.runner_mass_g, units, 3), {
      field: "runner"
    }) + `<td data-field="limits">${p.limits_met ? "yes" : "no"}</td><td data-field="chosen">${p.chosen ? "<strong>\u25C0 plan taken</strong>" : ""}</td></tr>`).join("");
    const chosen = opt.front.find((p) => p.chosen);
    return scrollBox(`<table class="data front" id="front-table"><caption>Fewest changes: the best plan found for each number of sizes allowed to change (sizes as calculated, before rounding to cutters)</caption><thead><tr><th scope="col">sizes allowed to change</th><th scope="col">which sizes change</th><th scope="col">imbalance</th><th scope="col">runner per shot</th><th scope="col">limits met</th><th scope="col"></th></tr></thead><tbody>${rows}</tbody></table>`) + `<p class="note">The plan taken is the first, with the fewest changes, that meets every limit${chosen && !chosen.limits_met ? "; none here meets them all, so the one that comes closest was taken" : ""}: each size more is more work on the tool.</p>`;
  }
  function chartEnd(results) {
    const ends = results.flatMap((r) => {
      const phase = r ? velocityPhase(r) : [];
      return phase.length ? [
        phase[phase.length - 1].time_s ?? 0
      ] : [];
    });
    return Math.max(...ends, 1e-3);
  }
  function fillChartSvg(result, options) {
    const history2 = velocityPhase(result);
    const series = result.cavities.map((c, k) => {
      const points = [];
      for (const h of history2) {
        const fill = h.cavity_fill_percent[k] ?? NaN;
        points.push([
          h.time_s ?? NaN,
          fill
        ]);
        if (fill >= 100) break;
      }
      const last = points[points.length - 1]?.[1] ?? NaN;
      const label = last < 100 - 1e-6 && Number.isFinite(last) ? `${c.id} ${num(c.fill_percent_at_switchover ?? last, 3)} %` : c.id;
      return {
        label,
        style: k,
        points
      };
    });
    const firstFull = Math.min(...result.cavities.map((c) => c.fill_time_s ?? Infinity));
    const sw = result.switchover_time_s;
    const verticals = [];
    if (Number.isFinite(firstFull)) verticals.push({
      x: firstFull,
      label: "first full"
    });
    if (typeof sw === "number") {
      verticals.push({
        x: sw,
        label: `switchover${options.switchoverPercent ? ` (${options.switchoverPercent} %)` : ""}`,
        at: "top",
        mark: "switchover"
      });
    }
    return lineChart(series, {
      verticals,
      title: options.title,
      xLabel: "time, s",
      yLabel: "cavity fill, %",
      yDomain: [
        0,
        100
      ],
      ...options.xMax ? {
        xDomain: [
          0,
          options.xMax
        ]
      } : {},
      width: options.width ?? 460,
      height: 270,
      ...options.id ? {
        id: options.id
      } : {}
    }).replace(/^<svg /, `<svg data-switchover="${sw ?? ""}" `);
  }
  function pathProfiles(result) {
    return (result.paths ?? []).map((p) => {
      let x = 0;
      const firstFull = p.elements.every((e) => typeof e.pressure_drop_first_full_MPa === "number");
      const drop = (e) => (firstFull ? e.pressure_drop_first_full_MPa : e.pressure_drop_MPa) ?? 0;
      let pressure = p.elements.reduce((s, e) => s + drop(e), 0);
      const points = [
        [
          0,
          pressure
        ]
      ];
      for (const e of p.elements) {
        x += e.length_mm ?? 0;
        pressure -= drop(e);
        points.push([
          x,
          Math.max(0, pressure)
        ]);
      }
      return {
        cavity: p.cavity,
        points,
        ids: p.elements.map((e) => e.id)
      };
    });
  }
  function pathPressureSvg(shown, ctx) {
    const u = ctx.units;
    const after = primary(shown);
    const order = new Map(after.cavities.map((c, k) => [
      c.id,
      k
    ]));
    const conv = (pts) => pts.map(([x, p]) => [
      lengthFromMm(x, u.length),
      pressureFromMpa(p, u.pressure)
    ]);
    const series = [];
    if (shown.kind === "optimization") {
      for (const p of pathProfiles(shown.result.before)) {
        series.push({
          label: `${p.cavity} before`,
          style: order.get(p.cavity) ?? 0,
          points: conv(p.points),
          faint: true
        });
      }
    }
    for (const p of pathProfiles(after)) {
      series.push({
        label: p.cavity,
        style: order.get(p.cavity) ?? 0,
        points: conv(p.points)
      });
    }
    return lineChart(series, {
      title: `Pressure along each flow path as the first cavity fills${shown.kind === "optimization" ? " (after; before in grey)" : ""}`,
      xLabel: `distance from the nozzle along the path, ${unitSymbol(u, "length")}`,
      yLabel: `melt pressure, ${unitSymbol(u, "pressure")}`,
      markEveryPoint: true,
      width: 560,
      height: 280,
      id: "path-chart"
    });
  }
  function pressChartsSvg(shown, ctx) {
    const u = ctx.units;
    const after = primary(shown);
    const before = shown.kind === "optimization" ? shown.result.before : null;
    const m = ctx.scenario.machine;
    const frac = ctx.scenario.goals?.max_pressure_fraction ?? 0.8;
    const swPercent = ctx.scenario.process?.switchover_percent;
    const hist = (r, f) => velocityPhase(r).map((h) => [
      h.time_s ?? NaN,
      f(h)
    ]);
    const p = (v) => pressureFromMpa(v ?? NaN, u.pressure);
    const k = (v) => forceFromKn(v ?? NaN, u.force);
    const pSeries = [];
    const kSeries = [];
    if (before) {
      pSeries.push({
        label: "before",
        style: 6,
        points: hist(before, (h) => p(h.feed_pressure_MPa)),
        faint: true
      });
      kSeries.push({
        label: "before",
        style: 6,
        points: hist(before, (h) => k(h.clamp_force_kN)),
        faint: true
      });
    }
    pSeries.push({
      label: before ? "after" : "nozzle",
      style: 0,
      points: hist(after, (h) => p(h.feed_pressure_MPa))
    });
    kSeries.push({
      label: before ? "after" : "clamp",
      style: 1,
      points: hist(after, (h) => k(h.clamp_force_kN))
    });
    const xMax = chartEnd([
      before,
      after
    ]);
    const verticals = [
      before,
      after
    ].flatMap((r) => typeof r?.switchover_time_s === "number" ? [
      {
        x: r.switchover_time_s,
        label: r === before ? "" : `switchover${swPercent ? ` (${swPercent} %)` : ""}`,
        at: "top",
        mark: "switchover"
      }
    ] : []);
    const pressure = lineChart(pSeries, {
      labelFaint: true,
      title: "Injection pressure at the nozzle, filling",
      xLabel: "time, s",
      yLabel: `pressure, ${unitSymbol(u, "pressure")}`,
      xDomain: [
        0,
        xMax
      ],
      verticals,
      rules: [
        {
          y: p(m.max_injection_pressure_MPa),
          label: "press limit"
        },
        {
          y: p(m.max_injection_pressure_MPa * frac),
          label: `target ${Math.round(frac * 100)} %`
        }
      ],
      width: 420,
      height: 260,
      id: "pressure-chart"
    });
    const clamp = lineChart(kSeries, {
      labelFaint: true,
      title: "Clamp force (cavities + runner), filling",
      xLabel: "time, s",
      yLabel: `force, ${unitSymbol(u, "force")}`,
      xDomain: [
        0,
        xMax
      ],
      verticals,
      rules: [
        {
          y: k(m.clamp_force_kN),
          label: "press rating"
        }
      ],
      width: 420,
      height: 260,
      id: "clamp-chart"
    });
    return pressure + clamp;
  }
  function elementTableHtml(result, units, meltTemperature_C, options = {}) {
    const freeze = new Map((result.freeze?.entries ?? []).map((f) => [
      f.id,
      f
    ]));
    const hold = options.holdTime_s ?? null;
    const rows = result.elements.filter((e) => e.kind !== "cavity").map((e) => {
      const f = freeze.get(e.id);
      const rise = meltTemperature_C !== null && typeof e.melt_temperature_end_C === "number" ? e.melt_temperature_end_C - meltTemperature_C : null;
      const freezeTime = f?.freeze_time_s ?? null;
      const gateOpen = e.kind === "gate" && hold !== null && freezeTime !== null && freezeTime > hold;
      const gateShut = e.kind === "gate" && hold !== null && freezeTime !== null && freezeTime <= hold;
      return `<tr data-element="${escapeXml(e.id)}" data-kind="${escapeXml(e.kind)}"><th scope="row">${escapeXml(e.id)} <span class="muted">${escapeXml(kindWord(e.kind))}</span></th>` + cell(e.pressure_drop_end_MPa, formatPressure(e.pressure_drop_end_MPa, units), {
        field: "pressure_drop_end_MPa"
      }) + cell(e.wall_shear_rate_peak_1_s, num(e.wall_shear_rate_peak_1_s, 3), {
        field: "wall_shear_rate_peak_1_s"
      }) + cell(rise, `${formatTemperatureRise(rise, units)}${typeof e.melt_temperature_end_C === "number" ? ` (${formatTemperature(e.melt_temperature_end_C, units)})` : ""}`, {
        field: "melt_temperature_rise"
      }) + cell(e.frozen_layer_end_mm, `${formatLength(e.frozen_layer_end_mm, units.length)} ${unitSymbol(units, "length")}${e.frozen_shut ? " \u2014 frozen shut" : ""}`, {
        field: "frozen_layer_end_mm"
      }, e.frozen_shut ? "over" : "") + cell(freezeTime, `${num(freezeTime, 3)} s${gateOpen ? " \u2014 still open when the hold ends" : gateShut ? " \u2014 seals within the hold" : ""}`, {
        field: "freeze_time_s"
      }, gateOpen ? "over" : "") + `</tr>`;
    }).join("");
    return scrollBox(`<table class="data elements" id="element-table"><caption>Per runner and gate${hold !== null ? ` (hold time ${num(hold, 3)} s)` : ""}</caption><thead><tr><th scope="col">element</th><th scope="col">pressure drop at switchover</th><th scope="col">wall shear peak, 1/s</th><th scope="col">melt heating (leaving it)</th><th scope="col">frozen layer at switchover</th><th scope="col">freeze time</th></tr></thead><tbody>${rows}</tbody></table>`) + `<p class="note">Heating is the adiabatic upper bound; a gate should seal within the hold time, or melt can flow back out of the part (a check of the times, not of the packing).</p>`;
  }
  function kindWord(kind) {
    return {
      feed: "sprue / drop",
      runner: "runner",
      gate: "gate"
    }[kind] ?? kind;
  }
  function warningsHtml(result) {
    if (result.warnings.length === 0) return `<p class="empty">No warnings.</p>`;
    return `<ul class="warnings">${result.warnings.map((w) => `<li class="${escapeXml(w.severity ?? "warning")}" data-code="${escapeXml(w.code)}"><span class="sev">${w.severity === "info" ? "note" : "warning"}</span> ${escapeXml(w.message)}</li>`).join("")}</ul>`;
  }
  function cautionsHtml(result) {
    return `<ul class="cautions">${result.cautions.map((c) => `<li>${escapeXml(c)}</li>`).join("")}</ul>`;
  }
  var STATUS_WORDS = {
    converged: "Goals met",
    infeasible: "Goals not reachable within the limits",
    iteration_limit: "Stopped at the iteration limit",
    cancelled: "Cancelled \u2014 best design so far"
  };
  var STATUS_MEANING = {
    converged: "These sizes meet every goal set on the Scenario tab.",
    infeasible: "No sizes inside the limits meet every goal; these are the closest the search found.",
    iteration_limit: "The search used all its rounds; these are the best sizes it found, not a proven best.",
    cancelled: "The search was stopped before it finished; these are the best sizes it had reached."
  };
  var SLOPE_WORDS = {
    tangent: "carried by each simulation (tangent)",
    finite_difference: "by finite differences (one simulation per size)"
  };
  function statusVerdict(opt) {
    if (opt.status === "converged" && !opt.after_limits_met) {
      return {
        words: "Goals not met in cutter sizes",
        meaning: `The exact sizes would meet every goal, but the nearest cutter sizes miss: ${opt.after_violations.join("; ")}. These are the closest cutter sizes found.`
      };
    }
    return {
      words: STATUS_WORDS[opt.status] ?? opt.status,
      meaning: STATUS_MEANING[opt.status] ?? ""
    };
  }
  function verdictHtml(opt) {
    const internals = [
      `<p>${escapeXml(opt.reason)}</p>`,
      opt.snapping ? `<p>Cutters: ${escapeXml(opt.snapping)}</p>` : "",
      `<p>${opt.simulations} fill simulations; slopes ${SLOPE_WORDS[opt.slopes]}.</p>`
    ].join("");
    const { words, meaning } = statusVerdict(opt);
    return `<div class="verdict" data-status="${escapeXml(opt.status)}" data-limits-met="${opt.after_limits_met}"><p><strong>${escapeXml(words)}</strong> \u2014 ${escapeXml(meaning)}</p>` + (opt.would_need.length ? `<p>What would make it reachable (a first estimate; simulate to confirm):</p><ul>${opt.would_need.map((w) => `<li>${escapeXml(w)}</li>`).join("")}</ul>` : "") + `<details class="advanced"><summary>Advanced: the optimizer's own account</summary>${internals}</details></div>`;
  }
  function seriesKeyHtml(ids) {
    return `<ul class="series-key">${ids.map((id, k) => {
      const s = seriesStyle(k);
      return `<li><svg width="34" height="12" aria-hidden="true"><line x1="1" y1="6" x2="26" y2="6" stroke="${s.colour}" stroke-width="2"${s.dash ? ` stroke-dasharray="${s.dash}"` : ""}/>${markerSvg(s.marker, 29, 6, 6, s.colour)}</svg>${escapeXml(id)}</li>`;
    }).join("")}</ul>`;
  }
  function staleBannerHtml(what) {
    return `<p class="stale-banner" role="alert" data-stale="true"><strong>Out of date \u2014 run again.</strong> The scenario in the editor has changed since this ${escapeXml(what)} was made; its numbers belong to the earlier scenario.</p>`;
  }
  function changeSheetHtml(opt, options) {
    const b = opt.before, a = opt.after;
    const u = options.units;
    const row = (label, x, y) => `<tr><th scope="row">${escapeXml(label)}</th><td class="num">${escapeXml(x)}</td><td class="num">${escapeXml(y)}</td></tr>`;
    const fill = (label, value = "") => `<tr><th scope="row">${escapeXml(label)}</th><td${value ? "" : ' class="fill-in"'}>${escapeXml(value)}</td></tr>`;
    const at = options.switchoverPercent ? ` (at switchover, ${options.switchoverPercent} %)` : "";
    return `<article class="sheet${options.stale ? " stale" : ""}" id="sheet" data-stale="${options.stale ? "true" : "false"}">` + (options.stale ? staleBannerHtml("change sheet") : "") + `<header class="sheet-head"><div class="sheet-title"><p class="kicker">evenfill \xB7 change sheet</p><h2>${escapeXml(options.toolName)}</h2>${options.scenarioLabel ? `<p class="muted">${escapeXml(options.scenarioLabel)}</p>` : ""}<p class="sheet-status"><strong>${escapeXml(statusVerdict(opt).words)}</strong> \u2014 ${escapeXml(statusVerdict(opt).meaning)}</p></div><table class="rev-block" aria-label="Tool, press, resin lot and revision">` + fill("Tool no.") + fill("Press") + fill("Resin lot") + fill("Revision") + fill("Date", options.date).replace("<td>", '<td id="sheet-date">') + (options.scenarioCode ? fill("Scenario check", options.scenarioCode) : "") + fill("Units", `${u.length === "mm" ? "mm (inch beside)" : "inch (mm beside)"}, ${unitSymbol(u, "pressure")}`) + `</table></header><div class="sheet-grid"><div class="sheet-left"><section class="sheet-layout"><h3>Layout after the changes</h3>${options.layout}</section><section class="sheet-cautions"><h3>Cautions</h3>${cautionsHtml(a)}</section><section class="signoff"><h3>Sign-off</h3><div class="sign-lines">` + [
      "Designed by",
      "Checked by",
      "Toolmaker",
      "Trial shot approved"
    ].map((who) => `<div class="sign"><span class="line"></span><span>${escapeXml(who)} \u2014 name, date</span></div>`).join("") + `</div></section></div><div class="sheet-side"><section class="sheet-steps"><h3>${newTool(opt.changes) ? "Sizes to cut" : "Steps in order of work"}</h3><p class="muted small">${newTool(opt.changes) ? "A new tool: cut every size as listed, then shoot and weigh short shots against the predicted short shot." : "Cut one step, shoot a short shot (the first cavity just full), weigh each part against the predicted short shot, then decide on the next. Each step was simulated with every step before it."}</p>${changeTableHtml(opt.changes, u, {
      id: "sheet-changes",
      sheet: true,
      start: opt.changes_start,
      omitted: opt.changes_omitted
    })}</section><section class="sheet-effect"><h3>Predicted effect</h3><table class="data compact"><thead><tr><th></th><th scope="col">before</th><th scope="col">after all steps</th></tr></thead><tbody>` + row("fill-time imbalance", `${num(b.imbalance_percent)} %`, `${num(a.imbalance_percent)} %`) + row(`peak injection pressure${at}`, formatPressure(b.feed_pressure_peak_MPa, u), formatPressure(a.feed_pressure_peak_MPa, u)) + row(`peak clamp force${at}`, formatForce(b.clamp_force_peak_kN, u), formatForce(a.clamp_force_peak_kN, u)) + row("cold runner", formatMass(b.runner_mass_g, u), formatMass(a.runner_mass_g, u)) + `</tbody></table></section></div></div></article>`;
  }

  // src/page/calibration_view.ts
  function massUnit(units) {
    return units.length === "in" ? "oz" : "g";
  }
  var toGrams = (value, units) => massUnit(units) === "oz" ? value * G_PER_OUNCE : value;
  var fromGrams = (g, units) => massUnit(units) === "oz" ? g / G_PER_OUNCE : g;
  function shotRowsFrom(scenario, units) {
    const shots = (scenario.measurements?.short_shots ?? []).filter((s) => s.shot_percent !== void 0);
    if (shots.length === 0) return [
      {
        shotPercent: "",
        masses: {}
      }
    ];
    return shots.map((s) => ({
      shotPercent: String(s.shot_percent),
      masses: Object.fromEntries(s.parts.filter((p) => p.mass_g !== void 0).map((p) => [
        p.cavity,
        String(Number(fromGrams(p.mass_g, units).toPrecision(6)))
      ]))
    }));
  }
  function positive(text) {
    if (text === void 0 || text.trim() === "") return void 0;
    const v = Number(text.replace(/,/g, ""));
    return Number.isFinite(v) && v > 0 ? v : void 0;
  }
  function shotRowProblems(rows, scenario) {
    const problems = [];
    let weighed = 0;
    rows.forEach((row, k) => {
      const masses = scenario.cavities.filter((c) => row.masses[c.id]?.trim());
      const shot = positive(row.shotPercent);
      if (masses.length === 0 && row.shotPercent.trim() === "") return;
      if (shot === void 0 || shot > 100) {
        problems.push(`Shot ${k + 1}: give the shot size as a share of the full shot, 0\u2013100 %.`);
      }
      for (const c of masses) {
        if (positive(row.masses[c.id]) === void 0) {
          problems.push(`Shot ${k + 1}, ${c.id}: the mass must be a number above 0.`);
        }
      }
      weighed += masses.length;
    });
    if (weighed === 0) problems.push("Weigh at least one part of one short shot.");
    return problems;
  }
  function measurementsFromRows(rows, scenario, units) {
    const typed = rows.flatMap((row) => {
      const shot = positive(row.shotPercent);
      const parts = scenario.cavities.flatMap((c) => {
        const m = positive(row.masses[c.id]);
        return m === void 0 ? [] : [
          {
            cavity: c.id,
            mass_g: Number(toGrams(m, units).toPrecision(8))
          }
        ];
      });
      return shot === void 0 || parts.length === 0 ? [] : [
        {
          shot_percent: shot,
          parts
        }
      ];
    });
    const kept = (scenario.measurements?.short_shots ?? []).filter((s) => s.shot_percent === void 0 || s.parts.some((p) => p.mass_g === void 0));
    const pressure = scenario.measurements?.full_shot_pressure_MPa;
    return {
      short_shots: [
        ...kept,
        ...typed
      ],
      ...pressure !== void 0 ? {
        full_shot_pressure_MPa: pressure
      } : {}
    };
  }
  function withMeasurements(scenario, rows, units) {
    return {
      ...structuredClone(scenario),
      measurements: measurementsFromRows(rows, scenario, units)
    };
  }
  function factorChoices(scenario) {
    const cavityName = (id) => {
      const c = scenario.cavities.find((x) => x.id === id);
      return c ? ` (into ${c.id}${c.name ? ` ${c.name}` : ""})` : "";
    };
    return [
      {
        key: "viscosity",
        label: "Resin lot: how thick this lot runs",
        factor: {
          kind: "viscosity"
        }
      },
      ...scenario.gates.map((g) => ({
        key: `gate:${g.id}`,
        label: `Gate ${g.id}${cavityName(g.cavity)}: effective opening`,
        factor: {
          kind: "gate_size",
          gate: g.id
        }
      })),
      ...(scenario.runners ?? []).map((r) => ({
        key: `runner:${r.id}`,
        label: `Branch ${r.id}: how freely it flows`,
        factor: {
          kind: "runner_size",
          runner: r.id
        }
      })),
      {
        key: "melt",
        label: "Melt temperature: actual against set",
        factor: {
          kind: "melt_temperature"
        }
      }
    ];
  }
  function xAxis(xd, xs, frame, label) {
    const { margin, width, height } = frame;
    const out = [];
    for (const t of xd.ticks) {
      const x = xs(t).toFixed(1);
      out.push(`<line class="grid" x1="${x}" x2="${x}" y1="${margin.top - 4}" y2="${height - margin.bottom}"/>`, `<text class="tick" x="${x}" y="${height - margin.bottom + 14}" text-anchor="middle">${tickLabel(t, xd.step)}</text>`);
    }
    out.push(`<text class="axis-label" x="${(margin.left + width - margin.right) / 2}" y="${height - 8}" text-anchor="middle">${escapeXml(label)}</text>`);
    return out;
  }
  function factorWords(f) {
    switch (f.kind) {
      case "viscosity":
        return "Resin lot viscosity";
      case "gate_size":
        return `Gate ${f.gate} effective opening`;
      case "runner_size":
        return `Branch ${f.runner} effective size`;
      case "melt_temperature":
        return "Melt temperature, actual against set";
    }
  }
  function factorValueText(f, value, units) {
    if (value === null) return "\u2013";
    if (f.kind === "melt_temperature") {
      return `${value >= 0 ? "+" : "\u2212"}${formatTemperatureRise(Math.abs(value), units)}`;
    }
    return `\xD7 ${formatNumber(value, 3)}`;
  }
  var FIT_CAUTION = "A fit is only as good as the shots behind it: weigh several short shots of each size, all at the same settings (melt, mold, rate, switchover), after the process has settled, and trim runners off before weighing. One odd shot moves every factor.";
  function factorTableHtml(result, units) {
    const rows = result.factors.map((f) => {
      const value = factorValueText(f.factor, f.value, units);
      const se = f.standard_error === null ? "\u2013" : f.factor.kind === "melt_temperature" ? `\xB1 ${formatTemperatureRise(f.standard_error, units)}` : `\xB1 ${formatNumber(f.standard_error, 2)}`;
      const verdict = !f.identified ? `<strong>Not identified</strong>: these shots cannot tell it apart, so it stays near today's model. Do not read a change into it.` : f.at_bound ? `At the edge of what the fit allows: check the shots and the scenario before trusting it.` : `Pinned down by the shots.`;
      return `<tr data-factor="${escapeXml(f.name)}" data-identified="${f.identified}"><th scope="row">${escapeXml(factorWords(f.factor))}</th><td class="num">${escapeXml(value)}</td><td class="num">${escapeXml(se)}</td><td>${verdict}</td></tr>`;
    }).join("");
    return `<div class="table-scroll" tabindex="0"><table class="data" id="fit-factors"><caption>Fitted factors (today's model is \xD7 1, or +0)</caption><thead><tr><th scope="col">factor</th><th scope="col">fitted</th><th scope="col">uncertainty (1 standard error)</th><th scope="col">what it means</th></tr></thead><tbody>${rows}</tbody></table></div>`;
  }
  function fitBarsSvg(result, options = {}) {
    const groups = result.residuals;
    const width = options.width ?? 460;
    const barH = 7, gap = 3, groupGap = 10;
    const margin = {
      left: 92,
      right: 16,
      top: 30,
      bottom: 40
    };
    const groupH = 3 * barH + 2 * gap;
    const height = margin.top + margin.bottom + groups.length * (groupH + groupGap);
    const xd = niceDomain(0, 100, 5);
    const xs = linearScale(xd.domain, [
      margin.left,
      width - margin.right
    ]);
    const series = [
      {
        key: "measured",
        label: "weighed",
        style: seriesStyle(6),
        fill: "solid"
      },
      {
        key: "before",
        label: "model before",
        style: seriesStyle(1),
        fill: "hatch"
      },
      {
        key: "after",
        label: "model after the fit",
        style: seriesStyle(0),
        fill: "outline"
      }
    ];
    const id = options.id ?? "fit-bars";
    const out = [];
    out.push(`<svg xmlns="http://www.w3.org/2000/svg" class="chart" id="${escapeXml(id)}" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="Weighed fill against the model, before and after the fit">`, `<defs><pattern id="${escapeXml(id)}-hatch" width="4" height="4" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="4" height="4" fill="#ffffff"/><line x1="0" y1="0" x2="0" y2="4" stroke="${series[1].style.colour}" stroke-width="2.4"/></pattern></defs>`, `<text class="chart-title" x="${margin.left}" y="16">Part fill: weighed against the model</text>`);
    out.push(...xAxis(xd, xs, {
      margin,
      width,
      height
    }, "fill of the part, %"));
    const many = new Set(groups.map((g) => g.shot)).size > 1;
    groups.forEach((g, k) => {
      const y0 = margin.top + k * (groupH + groupGap);
      const label = many ? `${g.cavity} \xB7 shot ${g.shot + 1}` : g.cavity;
      out.push(`<g class="fit-group" data-cavity="${escapeXml(g.cavity)}" data-shot="${g.shot}">`, `<text class="tick" x="${margin.left - 6}" y="${y0 + groupH / 2}" text-anchor="end" dy="0.32em">${escapeXml(label)}</text>`);
      series.forEach((s, j) => {
        const value = g[`${s.key}_fill_percent`];
        const v = Math.max(0, Math.min(100, value ?? 0));
        const y = y0 + j * (barH + gap);
        const w = Math.max(0.5, xs(v) - xs(0));
        const fill = s.fill === "solid" ? s.style.colour : s.fill === "hatch" ? `url(#${escapeXml(id)}-hatch)` : "#ffffff";
        out.push(`<rect class="bar" data-series="${s.key}" data-value="${value === null ? "" : value.toFixed(3)}" x="${xs(0).toFixed(1)}" y="${y}" width="${w.toFixed(1)}" height="${barH}" fill="${fill}" stroke="${s.style.colour}" stroke-width="1.2"><title>${escapeXml(`${label}, ${s.label}: ${formatNumber(value, 3)} %`)}</title></rect>`);
      });
      out.push(`</g>`);
    });
    out.push(`</svg>`);
    return out.join("");
  }
  function fitBarsKeyHtml() {
    return `<ul class="series-key fit-key"><li><span class="swatch solid" aria-hidden="true"></span>weighed</li><li><span class="swatch hatch" aria-hidden="true"></span>model before the fit</li><li><span class="swatch outline" aria-hidden="true"></span>model after the fit</li></ul>`;
  }
  function fitSummaryText(result) {
    const rms = (key) => {
      const d = result.residuals.map((r) => (r[key] ?? NaN) - (r.measured_fill_percent ?? NaN));
      return Math.sqrt(d.reduce((s, x) => s + x * x, 0) / Math.max(1, d.length));
    };
    const how = result.stopped_because === "converged" ? "The fit settled" : result.stopped_because === "iteration_limit" ? "The fit used all its rounds without settling" : "The fit could not improve further";
    return `${how} after ${result.iterations} rounds and ${formatNumber(result.simulations, 3)} simulations. Typical gap between weighed and predicted fill: ${formatNumber(rms("before_fill_percent"), 2)} % before, ${formatNumber(rms("after_fill_percent"), 2)} % after.`;
  }
  function scenarioAfterChanges(scenario, changes) {
    const out = structuredClone(scenario);
    for (const c of changes) {
      const list = c.kind === "gate" ? out.gates : out.runners;
      const el = list?.find((e) => e.id === c.element);
      if (!el) continue;
      const key = c.dimension === "thickness" ? "thickness_mm" : "diameter_mm";
      const before = Number(el[key]);
      el[key] = c.to_mm;
      const ratio = before > 0 ? c.to_mm / before : 1;
      for (const side of [
        "width_mm",
        "depth_mm",
        "entry_diameter_mm"
      ]) {
        if (key === "diameter_mm" && typeof el[side] === "number") {
          el[side] = el[side] * ratio;
        }
      }
    }
    return out;
  }
  var WINDOW_FACTOR_WORDS = {
    melt: "melt temperature",
    mold: "mold temperature",
    rate: "injection rate",
    viscosity: "resin lot viscosity"
  };
  function rangeChart(title, rows, axisLabel, id, width) {
    const margin = {
      left: 92,
      right: 20,
      top: 28,
      bottom: 40
    };
    const rowH = 26;
    const height = margin.top + margin.bottom + rows.length * rowH;
    const values = rows.flatMap((r) => r.range).filter((v) => v !== null);
    const hi = values.length > 0 ? Math.max(...values) : 1;
    const xd = niceDomain(0, hi > 0 ? hi : 1, 4);
    const xs = linearScale(xd.domain, [
      margin.left,
      width - margin.right
    ]);
    const out = [
      `<svg xmlns="http://www.w3.org/2000/svg" class="chart" id="${escapeXml(id)}" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="${escapeXml(title)}">`,
      `<text class="chart-title" x="${margin.left}" y="16">${escapeXml(title)}</text>`
    ];
    out.push(...xAxis(xd, xs, {
      margin,
      width,
      height
    }, axisLabel));
    rows.forEach((r, k) => {
      const y = margin.top + k * rowH + 6;
      const [a, b] = r.range;
      const style = seriesStyle(r.style);
      out.push(`<text class="tick" x="${margin.left - 6}" y="${y + 7}" text-anchor="end" dy="0.32em">${escapeXml(r.label)}</text>`);
      if (a === null || b === null) return;
      const x0 = xs(a), x1 = Math.max(xs(b), x0 + 2);
      out.push(`<rect class="range" data-design="${escapeXml(r.label)}" data-low="${a}" data-high="${b}" x="${x0.toFixed(1)}" y="${y}" width="${(x1 - x0).toFixed(1)}" height="14" fill="${r.style === 0 ? style.colour : "#ffffff"}" stroke="${style.colour}" stroke-width="1.6"${style.dash ? ` stroke-dasharray="${style.dash}"` : ""}/>`);
    });
    out.push(`</svg>`);
    return out.join("");
  }
  var DESIGN_WORDS = {
    today: "today's tool",
    after: "after the changes"
  };
  function windowViewHtml(result, units) {
    const rows = result.designs.map((d, k) => ({
      d,
      style: k === 0 ? 0 : 1
    }));
    const imbalance = rangeChart("Imbalance across the window", rows.map(({ d, style }) => ({
      label: DESIGN_WORDS[d.design] ?? d.design,
      range: d.imbalance_range_percent,
      style
    })), "fill-time imbalance, %", "window-imbalance", 420);
    const shear = rangeChart("Peak gate shear across the window", rows.map(({ d, style }) => ({
      label: DESIGN_WORDS[d.design] ?? d.design,
      range: d.gate_shear_range_1_s,
      style
    })), "highest gate shear rate, 1/s", "window-shear", 420);
    const effects = effectsSvg(result);
    const r = result.range;
    const words = result.designs.map((d) => {
      const top = d.effects[0];
      const [lo, hi] = d.imbalance_range_percent;
      const [slo, shi] = d.gate_shear_range_1_s;
      const moves = top && top.imbalance_points !== null && Math.abs(top.imbalance_points) > 5e-3 ? ` ${capital(WINDOW_FACTOR_WORDS[top.factor] ?? top.factor)} moves the balance most: from its low to its high setting the imbalance ${top.imbalance_points > 0 ? "grows" : "shrinks"} by ${formatNumber(Math.abs(top.imbalance_points), 2)} points.` : " No setting in the window moves the balance noticeably.";
      const failed = d.failures.length > 0 ? ` ${d.failures.length} corner${d.failures.length === 1 ? "" : "s"} could not be simulated.` : "";
      return `<li data-design="${escapeXml(d.design)}"><strong>${escapeXml(capital(DESIGN_WORDS[d.design] ?? d.design))}:</strong> imbalance between ${formatNumber(lo, 2)} % and ${formatNumber(hi, 2)} %, peak gate shear between ${formatNumber(slo, 3)} and ${formatNumber(shi, 3)} 1/s.${moves}${failed}</li>`;
    }).join("");
    return `<p class="note">Each design simulated ${formatNumber(17, 2)} times: every combination of melt temperature \xB1 ${escapeXml(formatTemperatureRise(r.melt_temperature_K, units))}, mold temperature \xB1 ${escapeXml(formatTemperatureRise(r.mold_temperature_K, units))}, injection rate \xB1 ${formatNumber(r.injection_rate_percent, 3)} % and resin-lot viscosity \xB1 ${formatNumber(r.viscosity_percent, 3)} %, and the set point.</p><div class="charts">${imbalance}${shear}${effects}</div><ul class="window-words">${words}</ul>`;
  }
  var capital = (text) => text.charAt(0).toUpperCase() + text.slice(1);
  function effectsSvg(result) {
    const factors = [
      "melt",
      "mold",
      "rate",
      "viscosity"
    ];
    const width = 420;
    const margin = {
      left: 130,
      right: 20,
      top: 28,
      bottom: 40
    };
    const designs = result.designs;
    const barH = 9;
    const groupH = designs.length * (barH + 3) + 8;
    const height = margin.top + margin.bottom + factors.length * groupH;
    const all = designs.flatMap((d) => d.effects.map((e) => Math.abs(e.imbalance_points ?? 0)));
    const xd = niceDomain(0, Math.max(0.01, ...all), 4);
    const xs = linearScale(xd.domain, [
      margin.left,
      width - margin.right
    ]);
    const out = [
      `<svg xmlns="http://www.w3.org/2000/svg" class="chart" id="window-effects" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="What moves the balance">`,
      `<text class="chart-title" x="${margin.left}" y="16">What moves the balance (low \u2192 high setting)</text>`
    ];
    out.push(...xAxis(xd, xs, {
      margin,
      width,
      height
    }, "change of the imbalance, % points"));
    factors.forEach((f, k) => {
      const y0 = margin.top + k * groupH;
      out.push(`<text class="tick" x="${margin.left - 6}" y="${y0 + (groupH - 8) / 2}" text-anchor="end" dy="0.32em">${escapeXml(WINDOW_FACTOR_WORDS[f])}</text>`);
      designs.forEach((d, j) => {
        const e = d.effects.find((x) => x.factor === f);
        const v = Math.abs(e?.imbalance_points ?? 0);
        const style = seriesStyle(j);
        out.push(`<rect class="effect" data-factor="${f}" data-design="${d.design}" x="${xs(0).toFixed(1)}" y="${y0 + j * (barH + 3)}" width="${Math.max(0.5, xs(v) - xs(0)).toFixed(1)}" height="${barH}" fill="${j === 0 ? style.colour : "#ffffff"}" stroke="${style.colour}" stroke-width="1.4"${style.dash ? ` stroke-dasharray="${style.dash}"` : ""}><title>${escapeXml(`${DESIGN_WORDS[d.design] ?? d.design}, ${WINDOW_FACTOR_WORDS[f]}: ${formatNumber(e?.imbalance_points, 2)} points`)}</title></rect>`);
      });
    });
    out.push(`</svg>`);
    return out.join("");
  }

  // src/page/scenario_form.ts
  var obj = (v) => typeof v === "object" && v !== null && !Array.isArray(v) ? v : {};
  var numOrNull = (v) => typeof v === "number" && Number.isFinite(v) ? v : null;
  var round = (v, digits = 6) => Number(v.toPrecision(digits));
  function readForm(scenario, units) {
    const s = obj(scenario);
    const process = obj(s.process);
    const injection = obj(process.injection);
    const goals = obj(s.goals);
    const melt = numOrNull(process.melt_temperature_C);
    const mold = numOrNull(process.mold_temperature_C);
    const material = s.material;
    const kind = "fill_time_s" in injection ? "fill_time_s" : "flow_rate_cm3_s";
    return {
      material: typeof material === "string" ? material : "",
      inlineMaterialName: typeof material === "object" && material !== null ? String(obj(material).name ?? obj(material).id ?? "inline material") : null,
      meltTemperature: melt === null ? null : round(temperatureFromC(melt, units.temperature), 5),
      moldTemperature: mold === null ? null : round(temperatureFromC(mold, units.temperature), 5),
      injectionKind: kind,
      injectionValue: numOrNull(injection[kind]),
      mode: typeof goals.mode === "string" ? goals.mode : "new_tool",
      maxImbalancePercent: numOrNull(goals.max_imbalance_percent),
      cutters: Array.isArray(goals.cutters) ? "list" : typeof goals.cutters === "string" ? goals.cutters : "metric"
    };
  }
  function applyFormField(scenario, field, value, units) {
    const s = structuredClone(obj(scenario));
    const process = obj(s.process);
    const goals = obj(s.goals);
    const number = Number(value);
    const isNumber = value.trim() !== "" && Number.isFinite(number);
    switch (field) {
      case "material":
        if (value) s.material = value;
        break;
      case "meltTemperature":
        if (isNumber) process.melt_temperature_C = round(temperatureToC(number, units.temperature));
        s.process = process;
        break;
      case "moldTemperature":
        if (isNumber) process.mold_temperature_C = round(temperatureToC(number, units.temperature));
        s.process = process;
        break;
      case "injectionKind": {
        const injection = obj(process.injection);
        if (value === "fill_time_s" || value === "flow_rate_cm3_s") {
          process.injection = {
            [value]: numOrNull(injection[value]) ?? (value === "fill_time_s" ? 1 : 30)
          };
        }
        s.process = process;
        break;
      }
      case "injectionValue": {
        const injection = obj(process.injection);
        const kind = "fill_time_s" in injection ? "fill_time_s" : "flow_rate_cm3_s";
        if (isNumber) process.injection = {
          [kind]: number
        };
        s.process = process;
        break;
      }
      case "mode":
        goals.mode = value;
        s.goals = goals;
        break;
      case "maxImbalancePercent":
        if (isNumber) goals.max_imbalance_percent = number;
        s.goals = goals;
        break;
      case "cutters":
        if (value !== "list") goals.cutters = value;
        s.goals = goals;
        break;
      default:
        break;
    }
    return s;
  }

  // src/page/scenario_hash.ts
  function fnv1a(text, seed) {
    let h = seed >>> 0;
    for (let k = 0; k < text.length; k++) {
      h ^= text.charCodeAt(k);
      h = Math.imul(h, 16777619) >>> 0;
    }
    return h >>> 0;
  }
  function canonicalScenario(text) {
    try {
      return JSON.stringify(JSON.parse(text));
    } catch {
      return text;
    }
  }
  function scenarioHash(text) {
    const c = canonicalScenario(text);
    return fnv1a(c, 2166136261).toString(16).padStart(8, "0") + fnv1a(c, 2654435769).toString(16).padStart(8, "0");
  }

  // src/page/service_health.ts
  var HealthMonitor = class {
    #state = "unknown";
    #timer;
    #checking = null;
    #stopped = false;
    #options;
    constructor(options) {
      this.#options = {
        upIntervalMs: 5e3,
        downIntervalMs: 2e3,
        setTimer: (run, ms) => setTimeout(run, ms),
        clearTimer: (id) => clearTimeout(id),
        ...options
      };
    }
    /** The state after the latest check. */
    get state() {
      return this.#state;
    }
    /** Check now (coalesced with a check in flight), then keep checking on the interval. */
    checkNow() {
      if (this.#stopped) return Promise.resolve();
      if (this.#checking) return this.#checking;
      if (this.#timer !== void 0) this.#options.clearTimer(this.#timer);
      this.#timer = void 0;
      this.#checking = (async () => {
        let ok = false;
        try {
          ok = await this.#options.check();
        } catch {
          ok = false;
        }
        this.#checking = null;
        this.#set(ok ? "up" : "down");
        this.#schedule();
      })();
      return this.#checking;
    }
    /** Something found no service: check at once. */
    suspect() {
      void this.checkNow();
    }
    /** Stop checking. */
    stop() {
      this.#stopped = true;
      if (this.#timer !== void 0) this.#options.clearTimer(this.#timer);
      this.#timer = void 0;
    }
    #set(next) {
      const previous = this.#state;
      this.#state = next;
      if (next !== previous) this.#options.onChange(next, previous);
    }
    #schedule() {
      if (this.#stopped) return;
      const ms = this.#state === "down" ? this.#options.downIntervalMs : this.#options.upIntervalMs;
      this.#timer = this.#options.setTimer(() => {
        this.#timer = void 0;
        void this.checkNow();
      }, ms);
    }
  };

  // src/page/main.ts
  var $ = (id) => {
    const el = document.getElementById(id);
    if (!el) throw new Error(`The page has no element #${id}`);
    return el;
  };
  var state = {
    units: loadUnits(),
    materials: [],
    demos: [],
    saved: [],
    source: {
      kind: "none"
    },
    issues: [],
    shown: null,
    ranScenario: null,
    jobId: null,
    progress: [],
    /** Imbalance target of the job being run, %. */
    runTarget: null,
    /** Where the shown result came from: the scenario's check code, source and name then. */
    ran: null,
    /** The result no longer matches the editor's scenario. */
    stale: false,
    /** The simulate request in flight (the Cancel button aborts it). */
    simulating: null,
    /** The press's hold time for the gate-freeze check, s (page only; not in the scenario). */
    holdTime: loadHoldTime(),
    trial: {
      /** The mass table, and the cavity ids it was laid out for. */
      rows: [],
      rowsFor: "",
      /** Ticked factor keys (see factorChoices). */
      factors: /* @__PURE__ */ new Set([
        "viscosity"
      ]),
      fit: null,
      window: null,
      jobId: null,
      /** Check code of the calibrated scenario put in the editor. */
      calibratedHash: null
    }
  };
  function loadHoldTime() {
    const v = Number(localStorage.getItem("evenfill.holdTime") ?? "");
    return Number.isFinite(v) && v > 0 ? v : null;
  }
  function rememberRun(scenario, text) {
    const s = scenario;
    state.ranScenario = scenario;
    state.ran = {
      hash: scenarioHash(text),
      sourceLabel: sourceLabel(),
      meltTemperature_C: s.process?.melt_temperature_C ?? null,
      switchoverPercent: s.process?.switchover_percent ?? 98,
      holdTime_s: s.process?.hold_time_s ?? null
    };
    state.stale = false;
  }
  function checkStale() {
    const hash = scenarioHash(editor().value);
    const stale = state.ran !== null && hash !== state.ran.hash;
    document.body.dataset.stale = String(stale);
    renderTrialResults(hash);
    if (stale !== state.stale) {
      state.stale = stale;
      renderResults();
    }
  }
  function loadUnits() {
    try {
      return parseDisplayUnits(JSON.parse(localStorage.getItem("evenfill.units") ?? "null"));
    } catch {
      return parseDisplayUnits(null);
    }
  }
  function say(message, kind = "info") {
    const el = $("status");
    el.textContent = message;
    el.dataset.kind = kind;
  }
  var TABS = [
    "scenario",
    "run",
    "results",
    "sheet",
    "trials"
  ];
  function showTab(tab, focus = false) {
    for (const t of TABS) {
      const button = $(`tab-${t}`);
      const panel = $(`panel-${t}`);
      const on = t === tab;
      button.setAttribute("aria-selected", String(on));
      button.tabIndex = on ? 0 : -1;
      panel.hidden = !on;
    }
    document.body.dataset.view = tab;
    if (tab === "trials") renderTrials();
    if (focus) $(`tab-${tab}`).focus();
    if (location.hash !== `#${tab}`) history.replaceState(null, "", `#${tab}`);
  }
  function setupTabs() {
    for (const t of TABS) {
      const button = $(`tab-${t}`);
      button.addEventListener("click", () => showTab(t));
      button.addEventListener("keydown", (e) => {
        const k = TABS.indexOf(t);
        let next = null;
        if (e.key === "ArrowRight") next = (k + 1) % TABS.length;
        if (e.key === "ArrowLeft") next = (k - 1 + TABS.length) % TABS.length;
        if (e.key === "Home") next = 0;
        if (e.key === "End") next = TABS.length - 1;
        if (next !== null) {
          e.preventDefault();
          showTab(TABS[next], true);
        }
      });
    }
    const fromHash = location.hash.slice(1);
    showTab(TABS.includes(fromHash) ? fromHash : "scenario");
  }
  function setupUnits() {
    for (const key of [
      "length",
      "pressure",
      "force",
      "temperature"
    ]) {
      const select = $(`unit-${key}`);
      select.value = state.units[key];
      select.addEventListener("change", () => {
        state.units = parseDisplayUnits({
          ...state.units,
          [key]: select.value
        });
        localStorage.setItem("evenfill.units", JSON.stringify(state.units));
        refreshForm(true);
        renderPreview();
        renderProgress();
        renderResults();
        if (document.body.dataset.view === "trials") renderTrials();
      });
    }
  }
  var editor = () => $("scenario-text");
  function setEditorText(text) {
    editor().value = text;
    renderGutter();
    checkStale();
    const value = checkEditor();
    if (value !== null) validateOnService(text, value);
  }
  var checkTimer;
  var validated = {
    text: "",
    ok: false
  };
  var validation = 0;
  function onEditorChange() {
    renderGutter();
    checkStale();
    if (checkTimer !== void 0) clearTimeout(checkTimer);
    checkTimer = setTimeout(() => {
      const value = checkEditor();
      if (value !== null) validateOnService(editor().value, value);
    }, 300);
  }
  async function validateOnService(text, value) {
    if (validated.text === text) return validated.ok;
    const ticket = ++validation;
    try {
      const answer = await api.validate(value);
      if (ticket !== validation || editor().value !== text) return void 0;
      validated = {
        text,
        ok: answer.ok
      };
      state.issues = answer.ok ? [] : placeIssues(text, answer.issues ?? []);
      renderIssues();
      showEditorState(answer.ok ? "ok" : "error", answer.ok ? "Scenario is valid." : `${state.issues.length} problem${state.issues.length === 1 ? "" : "s"} (checked by the service).`);
      return answer.ok;
    } catch (error) {
      if (ticket === validation) report(error);
      return void 0;
    }
  }
  function showEditorState(kind, text) {
    $("editor-state").textContent = text;
    $("editor-state").dataset.kind = kind;
  }
  function editorScenarioOr(message) {
    const value = checkEditor();
    if (value === null) {
      say(message, "error");
      showTab("scenario");
      goToIssue(0);
    }
    return value;
  }
  function checkEditor() {
    if (checkTimer !== void 0) clearTimeout(checkTimer);
    const text = editor().value;
    const check = checkJsonSyntax(text);
    if (!check.ok) {
      state.issues = check.issues;
      validated = {
        text: "",
        ok: false
      };
      renderIssues();
      showEditorState("error", "Not valid JSON: nothing will be sent until it is fixed.");
      return null;
    }
    if (validated.text !== text) {
      state.issues = state.issues.filter((i) => i.code !== "invalid_json");
      renderIssues();
      showEditorState("info", "JSON is well formed; checking the scenario\u2026");
    }
    refreshForm(false, check.value);
    renderPreview(check.value);
    return check.value;
  }
  var LINE_HEIGHT = 20;
  function renderGutter() {
    const lines = editor().value.split("\n").length;
    const byLine = new Set(state.issues.map((i) => i.span.line));
    const out = [];
    for (let k = 1; k <= lines; k++) {
      out.push(byLine.has(k) ? `<span class="bad">${k}</span>` : String(k));
    }
    $("editor-gutter").innerHTML = out.join("\n");
    syncScroll();
  }
  function renderIssues() {
    renderGutter();
    const marks = $("editor-marks");
    const seen = /* @__PURE__ */ new Map();
    marks.innerHTML = state.issues.map((i, k) => {
      const n = seen.get(i.span.line) ?? 0;
      seen.set(i.span.line, n + 1);
      const top = (i.span.line - 1) * LINE_HEIGHT;
      return `<div class="mark-band" style="top:${top}px"></div><div class="editor-note" role="note" data-line="${i.span.line}" data-at="${escapeXml(i.at)}" data-index="${k}" style="top:${top + n * LINE_HEIGHT}px">${escapeXml(i.at)}: ${escapeXml(i.message)}</div>`;
    }).join("");
    const list = $("issue-list");
    list.innerHTML = state.issues.map((i, k) => `<li><button type="button" class="link" data-index="${k}" data-at="${escapeXml(i.at)}">${i.code === "invalid_json" ? escapeXml(i.at) : `line ${i.span.line}, <code>${escapeXml(i.at)}</code>`}</button> ${escapeXml(i.message)}</li>`).join("");
    list.hidden = state.issues.length === 0;
    syncScroll();
  }
  function syncScroll() {
    const top = editor().scrollTop;
    $("editor-gutter").scrollTop = top;
    $("editor-marks").style.transform = `translateY(${-top}px)`;
  }
  function goToIssue(index) {
    const issue = state.issues[index];
    if (!issue) return;
    const ta = editor();
    ta.focus();
    ta.setSelectionRange(issue.span.start, Math.max(issue.span.end, issue.span.start + 1));
    ta.scrollTop = Math.max(0, (issue.span.line - 4) * LINE_HEIGHT);
    syncScroll();
  }
  function setupEditor() {
    const ta = editor();
    ta.addEventListener("input", onEditorChange);
    ta.addEventListener("scroll", syncScroll);
    ta.addEventListener("keydown", (e) => {
      if (e.key === "Tab" && !e.shiftKey && !e.ctrlKey && !e.altKey && ta.dataset.tabIndent === "on") {
        e.preventDefault();
        ta.setRangeText("  ", ta.selectionStart, ta.selectionEnd, "end");
        onEditorChange();
      }
    });
    $("issue-list").addEventListener("click", (e) => {
      const b = e.target.closest("button[data-index]");
      if (b) goToIssue(Number(b.dataset.index));
    });
    $("check").addEventListener("click", async () => {
      const value = editorScenarioOr("Not valid JSON; see the editor.");
      if (value === null) return;
      validated = {
        text: "",
        ok: false
      };
      const ok = await validateOnService(editor().value, value);
      if (ok === void 0) return;
      say(ok ? "The scenario is valid." : "The scenario has problems; see the editor.", ok ? "ok" : "error");
      if (!ok) goToIssue(0);
    });
    $("format").addEventListener("click", () => {
      const value = checkEditor();
      if (value === null) say("Fix the JSON syntax first.", "error");
      else setEditorText(JSON.stringify(value, null, 2) + "\n");
    });
  }
  var FORM_FIELDS = [
    "material",
    "meltTemperature",
    "moldTemperature",
    "injectionKind",
    "injectionValue",
    "mode",
    "maxImbalancePercent",
    "cutters"
  ];
  function currentObject() {
    try {
      return JSON.parse(editor().value);
    } catch {
      return null;
    }
  }
  function refreshForm(force, value = currentObject()) {
    if (value === null || value === void 0) return;
    const f = readForm(value, state.units);
    for (const field of FORM_FIELDS) {
      const el = $(`form-${field}`);
      if (!force && document.activeElement === el) continue;
      const v = f[field];
      el.value = v === null ? "" : String(v);
    }
    $("form-inline-material").textContent = f.inlineMaterialName ? `This scenario carries its own material: ${f.inlineMaterialName} (edit it in the JSON).` : "";
    $("form-material").disabled = f.inlineMaterialName !== null;
    $("form-injection-unit").textContent = f.injectionKind === "fill_time_s" ? "s" : "cm\xB3/s";
    for (const id of [
      "unit-melt",
      "unit-mold"
    ]) {
      $(id).textContent = unitSymbol(state.units, "temperature");
    }
  }
  function setupForm() {
    $("settings").addEventListener("submit", (e) => e.preventDefault());
    for (const field of FORM_FIELDS) {
      const el = $(`form-${field}`);
      el.addEventListener("change", () => {
        const value = currentObject();
        if (value === null) {
          say("Fix the JSON syntax before using the form.", "error");
          return;
        }
        const next = applyFormField(value, field, el.value, state.units);
        setEditorText(JSON.stringify(next, null, 2) + "\n");
      });
    }
  }
  function renderMaterials() {
    $("form-material").innerHTML = state.materials.map((m) => `<option value="${escapeXml(m.id)}">${escapeXml(m.name)}${m.generic && !/generic/i.test(m.name) ? " (generic)" : ""}</option>`).join("");
  }
  function renderPreview(value = currentObject()) {
    const holder = $("preview");
    try {
      const s = value;
      if (!s || !Array.isArray(s.nodes) || !Array.isArray(s.gates) || !Array.isArray(s.cavities)) {
        return;
      }
      holder.innerHTML = layoutSvg(s, {
        lengthUnit: state.units.length,
        id: "preview-layout"
      }) + `<p class="note">${escapeXml(layoutKeyText(state.units.length))}</p>`;
    } catch {
    }
  }
  function renderSources() {
    const select = $("source");
    const keep = select.value;
    select.innerHTML = `<optgroup label="Demo tools">${state.demos.map((d) => `<option value="demo:${escapeXml(d.id)}" data-cavities="${d.cavities}">${escapeXml(d.name)} (${d.cavities} cavities)</option>`).join("")}</optgroup>` + (state.saved.length ? `<optgroup label="Saved scenarios">${state.saved.map((s) => `<option value="saved:${escapeXml(s.id)}">${escapeXml(s.name)} (rev ${s.revision}, ${escapeXml(s.updated_at.slice(0, 16).replace("T", " "))})</option>`).join("")}</optgroup>` : "");
    if (keep && [
      ...select.options
    ].some((o) => o.value === keep)) select.value = keep;
  }
  function sourceLabel() {
    const s = state.source;
    if (s.kind === "demo") return `demo ${s.id}`;
    if (s.kind === "saved") return `saved scenario ${s.id}, revision ${s.revision}`;
    if (s.kind === "file") return `file ${s.name}`;
    return "new";
  }
  function renderSourceState() {
    const calibrated = state.trial.calibratedHash !== null && scenarioHash(editor().value) === state.trial.calibratedHash;
    $("source-state").innerHTML = `Editing: ${escapeXml(sourceLabel())}${calibrated ? ` <span class="calibrated-mark" id="calibrated-mark">calibrated to weighed short shots</span>` : ""}`;
    const saved = state.source.kind === "saved";
    $("save").textContent = saved ? "Save revision" : "Save";
    $("revisions-box").hidden = !saved;
  }
  async function openSource(value) {
    const [kind, ...rest] = value.split(":");
    const id = rest.join(":");
    try {
      if (kind === "demo") {
        const scenario = await api.demo(id);
        state.source = {
          kind: "demo",
          id
        };
        setEditorText(JSON.stringify(scenario, null, 2) + "\n");
      } else if (kind === "saved") {
        const saved = await api.scenario(id);
        state.source = {
          kind: "saved",
          id,
          revision: saved.revision
        };
        setEditorText(JSON.stringify(saved.scenario, null, 2) + "\n");
        await loadRevisions();
      }
      renderSourceState();
      say(`Opened ${sourceLabel()}.`);
    } catch (error) {
      report(error);
    }
  }
  async function loadRevisions() {
    if (state.source.kind !== "saved") return;
    const { revisions } = await api.revisions(state.source.id);
    $("revisions").innerHTML = revisions.slice().sort((a, b) => b.revision - a.revision).map((r) => `<option value="${r.revision}">rev ${r.revision} \xB7 ${escapeXml(r.created_at.slice(0, 19).replace("T", " "))}</option>`).join("");
  }
  async function refreshLists() {
    const [materials, demos, saved] = await Promise.all([
      api.materials(),
      api.demos(),
      api.scenarios()
    ]);
    state.materials = materials.materials;
    state.demos = demos.demos;
    state.saved = saved.scenarios;
    renderMaterials();
    renderSources();
  }
  function setupSources() {
    $("open").addEventListener("click", () => openSource($("source").value));
    $("file").addEventListener("change", async () => {
      const input = $("file");
      const file = input.files?.[0];
      if (!file) return;
      state.source = {
        kind: "file",
        name: file.name
      };
      setEditorText(await file.text());
      renderSourceState();
      say(`Loaded ${file.name}.`);
      input.value = "";
    });
    $("download").addEventListener("click", () => {
      const blob = new Blob([
        editor().value
      ], {
        type: "application/json"
      });
      const a = document.createElement("a");
      a.href = URL.createObjectURL(blob);
      const name = currentObject()?.name ?? "scenario";
      a.download = `${name.replace(/[^A-Za-z0-9_.-]+/g, "_").slice(0, 60)}.json`;
      a.click();
      setTimeout(() => URL.revokeObjectURL(a.href), 1e3);
    });
    $("save").addEventListener("click", () => save(false));
    $("save-new").addEventListener("click", () => save(true));
    $("open-revision").addEventListener("click", async () => {
      if (state.source.kind !== "saved") return;
      const rev = Number($("revisions").value);
      try {
        const r = await api.revision(state.source.id, rev);
        setEditorText(JSON.stringify(r.scenario, null, 2) + "\n");
        say(`Opened revision ${rev} (saving makes it the newest revision).`);
      } catch (error) {
        report(error);
      }
    });
  }
  async function save(asNew) {
    const scenario = editorScenarioOr("Not saved: the JSON is not valid (see the editor).");
    if (scenario === null) return;
    try {
      if (state.source.kind === "saved" && !asNew) {
        const r = await api.updateScenario(state.source.id, scenario);
        state.source = {
          kind: "saved",
          id: state.source.id,
          revision: r.revision
        };
      } else {
        const r = await api.createScenario(scenario);
        state.source = {
          kind: "saved",
          id: r.id,
          revision: r.revision
        };
      }
      state.saved = (await api.scenarios()).scenarios;
      renderSources();
      $("source").value = `saved:${state.source.id}`;
      await loadRevisions();
      renderSourceState();
      say(`Saved: ${sourceLabel()}.`, "ok");
    } catch (error) {
      report(error);
    }
  }
  function report(error) {
    if (error instanceof ApiError && error.status === 401) {
      const token = globalThis.prompt("This service asks for its access token (EVENFILL_TOKEN) before changes. Token:");
      setAccessToken(token);
      say(token ? "Token set for this tab: try again." : `${error.message} (${error.code})`, "error");
      return;
    }
    if (error instanceof ApiError) {
      if (error.issues.length > 0) {
        state.issues = placeIssues(editor().value, error.issues);
        renderIssues();
        showTab("scenario");
        say(`The service found problems in the scenario: ${error.message}`, "error");
        return;
      }
      say(`${error.message} (${error.code})`, "error");
      return;
    }
    say(`Something went wrong on the page: ${error instanceof Error ? error.message : String(error)}. Reload the page if it persists.`, "error");
  }
  function setBusy(busy, cancellable = false) {
    $("simulate").disabled = busy;
    $("optimize").disabled = busy;
    $("cancel").disabled = !(busy && cancellable);
    $("run-slopes").disabled = busy;
  }
  async function simulate() {
    const scenario = editorScenarioOr("Nothing sent: the JSON is not valid (see the editor).");
    if (scenario === null) return;
    const text = editor().value;
    const abort = new AbortController();
    state.simulating = abort;
    setBusy(true, true);
    $("run-state").textContent = "Simulating\u2026";
    try {
      const result = await api.simulate(scenario, abort.signal);
      state.shown = {
        kind: "simulation",
        result
      };
      rememberRun(scenario, text);
      checkStale();
      renderResults();
      $("run-state").textContent = "Simulation done.";
      say("Simulation done.", "ok");
      showTab("results");
    } catch (error) {
      const cancelled = error instanceof ApiError && error.code === "cancelled";
      $("run-state").textContent = cancelled ? "Simulation cancelled." : "Simulation failed.";
      if (cancelled) say("Simulation cancelled.");
      else report(error);
    } finally {
      state.simulating = null;
      setBusy(false);
    }
  }
  async function optimize() {
    const scenario = editorScenarioOr("Nothing sent: the JSON is not valid (see the editor).");
    if (scenario === null) return;
    const text = editor().value;
    setBusy(true);
    state.progress = [];
    const goals = scenario.goals;
    state.runTarget = goals?.max_imbalance_percent ?? null;
    renderProgress();
    $("run-state").textContent = "Optimization queued\u2026";
    $("run-panel").dataset.job = "queued";
    delete $("run-panel").dataset.settled;
    try {
      const slopes = $("run-slopes").value;
      const started = await api.startJob(scenario, {
        slopes
      });
      state.jobId = started.id;
      $("run-panel").dataset.jobId = started.id;
      setBusy(true, true);
      const job = await watchJob(started.id, {
        onState: (status) => {
          $("run-state").textContent = `Optimization ${status}\u2026`;
          $("run-panel").dataset.job = status;
        },
        onProgress: (p) => {
          if ("stage" in p) return;
          const last = state.progress[state.progress.length - 1];
          if (!last || last.iteration !== p.iteration || last.simulations !== p.simulations) {
            state.progress.push(p);
          }
          renderProgress();
        },
        onStreamLost: () => health.suspect()
      });
      $("run-panel").dataset.job = job.status;
      const result = job.result?.format === "evenfill.optimization/1" ? job.result : null;
      if (job.status === "done" && result) {
        state.shown = {
          kind: "optimization",
          result
        };
        rememberRun(scenario, text);
        checkStale();
        renderResults();
        const words = statusVerdict(result).words;
        $("run-state").textContent = `Optimization done: ${words}.`;
        say(`Optimization done: ${words}.`, "ok");
        showTab("results");
      } else if (job.status === "cancelled" && result) {
        state.shown = {
          kind: "optimization",
          result: {
            ...result,
            status: "cancelled"
          }
        };
        rememberRun(scenario, text);
        checkStale();
        renderResults();
        $("run-state").textContent = "Optimization cancelled \u2014 best design so far shown.";
        say("Optimization cancelled \u2014 the best design so far is on the Results tab.");
      } else if (job.status === "cancelled") {
        $("run-state").textContent = "Optimization cancelled before it reached a design.";
        say("Optimization cancelled.");
      } else {
        const message = typeof job.error === "string" ? job.error : job.error?.message ?? "unknown error";
        $("run-state").textContent = `Optimization ${job.status}: ${message}`;
        say(`Optimization ${job.status}: ${message}`, "error");
      }
    } catch (error) {
      $("run-state").textContent = "Optimization could not run.";
      $("run-panel").dataset.job = "failed";
      report(error);
    } finally {
      state.jobId = null;
      setBusy(false);
      $("run-panel").dataset.settled = $("run-panel").dataset.job ?? "unknown";
    }
  }
  function renderProgress() {
    const p = state.progress[state.progress.length - 1];
    const u = state.units;
    $("progress-figures").innerHTML = p ? `<div><dt>iteration</dt><dd data-field="iteration">${p.iteration}</dd></div><div><dt>imbalance</dt><dd>${formatNumber(p.imbalance_percent, 3)} %</dd></div><div><dt>peak pressure</dt><dd>${escapeXml(formatPressure(p.feed_pressure_peak_MPa, u))}</dd></div><div><dt>runner</dt><dd>${formatNumber(p.runner_volume_cm3, 3)} cm\xB3</dd></div><div><dt>simulations</dt><dd>${p.simulations ?? "\u2013"}</dd></div>` : `<div><dt>iteration</dt><dd>\u2013</dd></div>`;
    $("progress-chart").innerHTML = state.progress.length > 0 ? lineChart([
      {
        label: "imbalance",
        style: 0,
        points: state.progress.map((q) => [
          q.iteration,
          q.imbalance_percent
        ])
      }
    ], {
      title: "Imbalance per iteration",
      xLabel: "iteration",
      yLabel: "imbalance, %",
      markEveryPoint: true,
      integerX: true,
      rules: state.runTarget === null ? [] : [
        {
          y: state.runTarget,
          label: "target"
        }
      ],
      width: 420,
      height: 220
    }) : "";
  }
  function setupRun() {
    $("simulate").addEventListener("click", simulate);
    $("optimize").addEventListener("click", optimize);
    $("cancel").addEventListener("click", async () => {
      if (state.simulating) {
        state.simulating.abort();
        return;
      }
      if (!state.jobId) return;
      try {
        await api.cancelJob(state.jobId);
        $("run-state").textContent = "Cancelling\u2026";
      } catch (error) {
        report(error);
      }
    });
    $("print").addEventListener("click", () => {
      if (state.stale) {
        say("The sheet is out of date: it prints marked so. Run again for a current sheet.", "error");
      }
      globalThis.print();
    });
    $("results-body").addEventListener("change", (e) => {
      const input = e.target;
      if (input.id !== "hold-time") return;
      const v = Number(input.value);
      state.holdTime = input.value.trim() !== "" && Number.isFinite(v) && v > 0 ? v : null;
      localStorage.setItem("evenfill.holdTime", state.holdTime === null ? "" : String(v));
      renderResults();
    });
  }
  function renderResults() {
    const shown = state.shown, scenario = state.ranScenario, ran = state.ran;
    const results = $("results-body");
    const sheet = $("sheet-body");
    if (!shown || !scenario || !ran) {
      results.innerHTML = `<p class="empty">No result yet: simulate or optimize on the Run tab.</p>`;
      sheet.innerHTML = `<p class="empty">The change sheet comes from an optimization: run one on the Run tab.</p>`;
      return;
    }
    const u = state.units;
    const ctx = {
      scenario,
      units: u
    };
    const r = primary(shown);
    const opt = shown.kind === "optimization" ? shown.result : null;
    const changes = opt?.changes ?? [];
    const layout = (id, print) => layoutSvg(scenario, {
      lengthUnit: u.length,
      changes,
      id,
      ...print ? {
        print
      } : {}
    });
    const xMax = chartEnd([
      opt?.before,
      r
    ]);
    const ids = r.cavities.map((c) => `${c.id}${c.name ? ` ${c.name}` : ""}`);
    const sw = ran.switchoverPercent;
    const kindWords = opt ? opt.status === "cancelled" ? "optimization, cancelled \u2014 best design so far" : "optimization" : "simulation";
    results.dataset.stale = String(state.stale);
    results.innerHTML = (state.stale ? staleBannerHtml("result") : "") + `<h2 class="run-title">${escapeXml(scenario.name)} <small>${escapeXml(kindWords)}${r.material ? ` \xB7 ${escapeXml(r.material.name)}` : ""} \xB7 ${escapeXml(ran.sourceLabel)}</small></h2>` + (opt ? verdictHtml(opt) : "") + summaryHtml(shown, ctx) + `<section class="block"><h3>Layout${opt ? " after the changes" : ""}</h3>${layout("results-layout")}<p class="note">${escapeXml(layoutKeyText(u.length))}</p></section><section class="block"><h3>Filling, up to switchover</h3>${seriesKeyHtml(ids)}<div class="charts">${opt ? fillChartSvg(opt.before, {
      title: "Before",
      id: "fill-before",
      xMax,
      switchoverPercent: sw
    }) + fillChartSvg(opt.after, {
      title: "After",
      id: "fill-after",
      xMax,
      switchoverPercent: sw
    }) : fillChartSvg(r, {
      title: "Cavity fill",
      id: "fill-result",
      xMax,
      switchoverPercent: sw
    })}</div><p class="note">The charts end at switchover (${sw} % of the shot volume), where the press changes from filling at the set rate to holding pressure. A cavity still filling then ends at its fill % at switchover; the hold phase fills the rest.</p></section><section class="block">${cavityTableHtml(shown, u)}</section>` + (opt ? `<section class="block"><h3>Change list</h3>${changeTableHtml(changes, u, {
      id: "change-table",
      start: opt.changes_start,
      omitted: opt.changes_omitted
    })}${shortShotTableHtml(opt, u)}</section>` + (opt.front.length ? `<section class="block" id="front-panel"><h3>Fewest changes</h3>${frontTableHtml(opt, u)}</section>` : "") : "") + `<section class="block"><h3>Runners and gates</h3>${ran.holdTime_s !== null ? `<p class="hold">Hold time ${ran.holdTime_s} s (the scenario's <code>process.hold_time_s</code>): each gate is checked to seal within it.</p>` : `<p class="hold"><label for="hold-time">Hold time on the press, s</label> <input id="hold-time" type="number" min="0" step="any" inputmode="decimal" value="${state.holdTime ?? ""}"> <span class="muted small">not in the scenario (process.hold_time_s): enter it to check each gate seals within it</span></p>`}${elementTableHtml(r, u, ran.meltTemperature_C, {
      holdTime_s: ran.holdTime_s ?? state.holdTime
    })}</section><section class="block"><h3>Pressure along each flow path</h3>${seriesKeyHtml(ids)}<div class="charts">${pathPressureSvg(shown, ctx)}</div></section><section class="block"><h3>Against the press</h3><div class="charts">${pressChartsSvg(shown, ctx)}</div><p class="muted">Filling only, to switchover: the peaks are the figures above. Estimates: the press maker's limits and local safety practice come first.</p></section><section class="block two"><div><h3>Warnings</h3>${warningsHtml(r)}</div><div><h3>Cautions</h3>${cautionsHtml(r)}</div></section>`;
    sheet.innerHTML = opt ? changeSheetHtml(opt, {
      toolName: scenario.name,
      date: (/* @__PURE__ */ new Date()).toISOString().slice(0, 10),
      layout: layout("sheet-layout", {
        maxWidthMm: 112,
        maxHeightMm: 95
      }),
      units: u,
      scenarioLabel: `${ran.sourceLabel}; mode ${scenario.goals?.mode ?? "new_tool"}; material ${opt.after.material?.name ?? ""}`,
      scenarioCode: ran.hash.slice(0, 8),
      stale: state.stale,
      switchoverPercent: sw
    }) : `<p class="empty">The change sheet comes from an optimization: run one on the Run tab.</p>`;
    $("print").textContent = state.stale ? "Print (marked out of date)" : "Print the change sheet";
  }
  function trialScenario() {
    const value = currentObject();
    if (!value || !Array.isArray(value.cavities) || !Array.isArray(value.gates)) return null;
    return value;
  }
  function renderTrials() {
    $("fit-caution").textContent = FIT_CAUTION;
    const scenario = trialScenario();
    if (!scenario) {
      $("shot-table").innerHTML = `<p class="empty">Fix the scenario's JSON first.</p>`;
      return;
    }
    const key = JSON.stringify([
      scenario.cavities.map((c) => c.id),
      state.units.length
    ]);
    if (state.trial.rowsFor !== key) {
      state.trial.rows = shotRowsFrom(scenario, state.units);
      state.trial.rowsFor = key;
    }
    const unit = massUnit(state.units);
    const rows = state.trial.rows;
    const head = rows.map((row, k) => `<th scope="col"><label for="shot-${k}-size">shot ${k + 1} size, % of full shot</label><br><input id="shot-${k}-size" data-shot="${k}" data-field="size" type="number" min="0" max="100" step="any" inputmode="decimal" value="${escapeXml(row.shotPercent)}"></th>`).join("");
    const body = scenario.cavities.map((c) => `<tr><th scope="row">${escapeXml(c.id)}${c.name ? ` <span class="muted">${escapeXml(c.name)}</span>` : ""}</th>${rows.map((row, k) => `<td><input aria-label="${escapeXml(c.id)} mass in shot ${k + 1}, ${unit}" data-shot="${k}" data-cavity="${escapeXml(c.id)}" type="number" min="0" step="any" inputmode="decimal" value="${escapeXml(row.masses[c.id] ?? "")}"></td>`).join("")}</tr>`).join("");
    $("shot-table").innerHTML = `<table class="data shot-table" id="mass-table"><caption>Weighed part mass, ${unit}</caption><thead><tr><th scope="col">cavity</th>${head}</tr></thead><tbody>${body}</tbody></table>`;
    const choices = factorChoices(scenario);
    $("factor-list").innerHTML = choices.map((f) => `<label><input type="checkbox" name="fit-factor" value="${escapeXml(f.key)}"${state.trial.factors.has(f.key) ? " checked" : ""}> ${escapeXml(f.label)}</label>`).join("");
    renderTrialResults();
  }
  function renderTrialResults(hash = scenarioHash(editor().value)) {
    const fit = state.trial.fit;
    const u = state.units;
    $("fit-result").innerHTML = fit ? (hash !== fit.hash ? staleBannerHtml("fit") : "") + `<p>${escapeXml(fitSummaryText(fit.result))}</p>${fitBarsKeyHtml()}<div class="charts">${fitBarsSvg(fit.result)}</div>${factorTableHtml(fit.result, u)}<p class="caution">${FIT_CAUTION}</p><div class="toolbar"><button type="button" id="optimize-calibrated" class="primary">Optimize from the calibrated model</button><span class="muted">puts the calibrated scenario in the editor and starts the optimization</span></div>` : "";
    const win = state.trial.window;
    $("window-result").innerHTML = win ? (hash !== win.hash ? staleBannerHtml("sweep") : "") + windowViewHtml(win.result, u) : "";
  }
  function setTrialBusy(busy) {
    $("run-fit").disabled = busy;
    $("run-window").disabled = busy;
    $("cancel-trial").disabled = !busy;
  }
  function writeShots() {
    const scenario = editorScenarioOr("Fix the scenario's JSON first (see the editor).");
    if (scenario === null) return null;
    const problems = shotRowProblems(state.trial.rows, scenario);
    if (problems.length > 0) {
      say(problems.join(" "), "error");
      return null;
    }
    const next = withMeasurements(scenario, state.trial.rows, state.units);
    setEditorText(JSON.stringify(next, null, 2) + "\n");
    return next;
  }
  async function runTrialJob(start2, stateId, words, onDone) {
    setTrialBusy(true);
    $(stateId).textContent = `${words}: queued\u2026`;
    try {
      const started = await start2();
      state.trial.jobId = started.id;
      const job = await watchJob(started.id, {
        onState: (status) => $(stateId).textContent = `${words}: ${status}\u2026`,
        onProgress: (p) => {
          const q = p;
          $(stateId).textContent = q.stage === "window" ? `${words}: ${q.done ?? 0} of ${q.total ?? "?"} simulations\u2026` : `${words}: round ${(q.iteration ?? 0) + 1}, ${q.simulations} simulations\u2026`;
        },
        onStreamLost: () => health.suspect()
      });
      if (job.status === "done" && job.result) {
        onDone(job.result);
        $(stateId).textContent = `${words}: done.`;
        say(`${words}: done.`, "ok");
      } else {
        const message = job.error?.message ?? job.status;
        $(stateId).textContent = `${words} ${job.status}: ${message}`;
        say(`${words} ${job.status}: ${message}`, job.status === "cancelled" ? "info" : "error");
      }
    } catch (error) {
      $(stateId).textContent = `${words} could not run.`;
      report(error);
    } finally {
      state.trial.jobId = null;
      setTrialBusy(false);
    }
  }
  async function runFit() {
    const scenario = writeShots();
    if (scenario === null) return;
    const choices = factorChoices(scenario);
    const factors = choices.filter((c) => state.trial.factors.has(c.key)).map((c) => c.factor);
    if (factors.length === 0) {
      say("Tick at least one thing that may differ from the model.", "error");
      return;
    }
    const hash = scenarioHash(editor().value);
    await runTrialJob(() => api.startCalibration(scenario, factors), "fit-state", "Fit", (result) => {
      state.trial.fit = {
        result,
        hash
      };
      renderTrialResults();
    });
  }
  async function runWindow() {
    const scenario = editorScenarioOr("Fix the scenario's JSON first (see the editor).");
    if (scenario === null) return;
    const hash = scenarioHash(editor().value);
    const opt = state.shown?.kind === "optimization" && !state.stale ? state.shown.result : null;
    const after = opt && opt.changes.length > 0 && state.ranScenario ? scenarioAfterChanges(state.ranScenario, opt.changes) : void 0;
    await runTrialJob(() => api.startWindow(scenario, after), "window-state", "Process-window sweep", (result) => {
      state.trial.window = {
        result,
        hash
      };
      renderTrialResults();
    });
  }
  function setupTrials() {
    const table = $("shot-table");
    table.addEventListener("input", (e) => {
      const input = e.target;
      const k = Number(input.dataset.shot);
      const row = state.trial.rows[k];
      if (!row) return;
      if (input.dataset.field === "size") row.shotPercent = input.value;
      else if (input.dataset.cavity) row.masses[input.dataset.cavity] = input.value;
    });
    $("add-shot").addEventListener("click", () => {
      state.trial.rows.push({
        shotPercent: "",
        masses: {}
      });
      renderTrials();
    });
    $("write-shots").addEventListener("click", () => {
      if (writeShots()) say("The masses are in the scenario's measurements block.", "ok");
    });
    $("factor-list").addEventListener("change", (e) => {
      const box = e.target;
      if (box.checked) state.trial.factors.add(box.value);
      else state.trial.factors.delete(box.value);
    });
    $("run-fit").addEventListener("click", runFit);
    $("run-window").addEventListener("click", runWindow);
    $("cancel-trial").addEventListener("click", async () => {
      if (!state.trial.jobId) return;
      try {
        await api.cancelJob(state.trial.jobId);
      } catch (error) {
        report(error);
      }
    });
    $("fit-result").addEventListener("click", (e) => {
      if (e.target.id !== "optimize-calibrated" || !state.trial.fit) return;
      const text = JSON.stringify(state.trial.fit.result.calibrated, null, 2) + "\n";
      state.trial.calibratedHash = scenarioHash(text);
      setEditorText(text);
      renderSourceState();
      showTab("run");
      void optimize();
    });
  }
  var health = new HealthMonitor({
    check: async () => {
      try {
        await api.health();
        return true;
      } catch {
        return false;
      }
    },
    onChange: showServiceState
  });
  function showServiceState(now, before) {
    const el = $("service-state");
    document.body.dataset.service = now;
    if (now === "down") {
      el.hidden = false;
      el.dataset.kind = "error";
      el.textContent = "The service is not answering (stopped or restarting?). What is on the page stays; checking, saving and running wait until it is back. Checking every 2 s.";
      if (state.jobId) {
        $("run-state").textContent = "The service is not answering: the optimization's state is unknown until it is back.";
        $("run-panel").dataset.job = "unknown";
      }
    } else if (now === "up" && before === "down") {
      el.hidden = false;
      el.dataset.kind = "ok";
      el.textContent = "The service is back.";
      if (document.body.dataset.ready !== "true") void loadStart();
    }
  }
  async function loadStart() {
    try {
      const about = await api.health();
      $("version").textContent = about.version ? `service ${about.version}` : "";
      await refreshLists();
      if (state.source.kind === "none") {
        const first = state.demos[0];
        if (first) await openSource(`demo:${first.id}`);
        $("source").value = first ? `demo:${first.id}` : "";
      }
      document.body.dataset.ready = "true";
    } catch (error) {
      report(error);
      document.body.dataset.ready = "error";
    }
  }
  async function start() {
    setupTabs();
    setupUnits();
    setupEditor();
    setupForm();
    setupSources();
    setupRun();
    setupTrials();
    setBusy(false);
    renderResults();
    renderProgress();
    onServiceUnreachable(() => health.suspect());
    await loadStart();
    void health.checkNow();
  }
  start();
})();
