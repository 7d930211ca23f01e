import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  type HydraulicElement,
  type HydraulicProblem,
  hydraulicTopology,
  solveHydraulics,
} from "../../src/network/hydraulic_solve.ts";

/** ΔP = r·|Q|ⁿ·sign(Q): the power-law channel form (e.g. Bird, Armstrong & Hassager vol. 1, ch. 5). */
function powerLaw(r: number, n: number): HydraulicElement["law"] {
  return (q: number) => ({
    pressureDrop: r * Math.sign(q) * Math.pow(Math.abs(q), n),
    dPressureDropDFlow: r * n * Math.pow(Math.abs(q), n - 1),
  });
}

function element(from: number, to: number, law: HydraulicElement["law"]): HydraulicElement {
  return { from, to, law };
}

/** Seeded uniform [0, 1): LCG of Press et al., *Numerical Recipes*, 2nd ed., §7.1. */
function lcg(seed: number): () => number {
  let x = seed >>> 0;
  return () => {
    x = (Math.imul(1664525, x) + 1013904223) >>> 0;
    return x / 4294967296;
  };
}

/** Net inflow at each node (external + incoming − outgoing), m³/s; computed here, not by the solver. */
function nodalImbalance(problem: HydraulicProblem, flows: Float64Array): Float64Array {
  const b = new Float64Array(problem.nodeCount);
  for (const [node, q] of problem.inflow) b[node] += q;
  problem.elements.forEach((el, e) => {
    b[el.from] -= flows[e];
    b[el.to] += flows[e];
  });
  return b;
}

function solveOk(problem: HydraulicProblem, options = {}) {
  const s = solveHydraulics(problem, options);
  if (!s.ok) throw new Error(`solve failed: ${s.code}: ${s.message}`);
  return s;
}

Deno.test("linear network: series, parallel and a loop against resistances in series/parallel", () => {
  // ΔP = R·Q (Ohm's-law analogue; Kirchhoff's laws, any circuits text). R in 1e10 Pa·s/m³:
  //   0 →R1=2→ 1;  1 →R2=1→ 2 →R3=3→ 3 (element 3→2 written backwards);  1 →R4=4→ 3;
  //   3 →R5=1→ 4 (fixed at 2e5 Pa); 1e-5 m³/s into node 0.
  // Paths 1→3: (R2 + R3) = 4 ∥ R4 = 4 → 2, equal split 0.5e-5 each. Total R = 2 + 2 + 1 = 5:
  //   P0 = 2e5 + 5e10·1e-5 = 7e5; P1 = 7e5 − 2e5 = 5e5; P2 = 5e5 − 1e10·0.5e-5 = 4.5e5;
  //   P3 = 2e5 + 1e10·1e-5 = 3e5; flows [1, 0.5, −0.5, 0.5, 1]·1e-5 (arithmetic).
  const linear = (r: number) => powerLaw(r * 1e10, 1);
  const problem: HydraulicProblem = {
    nodeCount: 5,
    elements: [
      element(0, 1, linear(2)),
      element(1, 2, linear(1)),
      element(3, 2, linear(3)),
      element(1, 3, linear(4)),
      element(3, 4, linear(1)),
    ],
    fixedPressure: new Map([[4, 2e5]]),
    inflow: new Map([[0, 1e-5]]),
  };
  const s = solveOk(problem);
  [7e5, 5e5, 4.5e5, 3e5, 2e5].forEach((p, i) =>
    assertClose(s.pressures[i], p, { rel: 1e-12, what: `P${i}` })
  );
  [1, 0.5, -0.5, 0.5, 1].forEach((q, e) =>
    assertClose(s.flows[e], q * 1e-5, { rel: 1e-12, what: `Q${e}` })
  );
  assert.ok(
    s.diagnostics.iterations <= 2,
    `linear laws take ${s.diagnostics.iterations} iterations`,
  );
});

Deno.test("power-law parallel branches: split ∝ r_i^(−1/n) and the inlet pressure in closed form", () => {
  // Sprue 0→1 (r_s), branches 1→(i+2) (r_i) to outlets at 0 Pa. Same ΔP = P1 on every branch,
  // so Q_i = (P1/r_i)^(1/n); Σ Q_i = Q gives P1 = [Q / Σ r_i^(−1/n)]ⁿ, and P0 = P1 + r_s·Qⁿ
  // (algebra on the law; the parallel-pipe argument of any hydraulics text).
  const r = [3e9, 5e9, 8e9, 2e10];
  const rs = 4e9;
  const Q = 2e-5;
  for (const n of [1, 0.5, 0.3]) {
    const elements = [element(0, 1, powerLaw(rs, n))];
    const fixedPressure = new Map<number, number>();
    r.forEach((ri, i) => {
      elements.push(element(1, i + 2, powerLaw(ri, n)));
      fixedPressure.set(i + 2, 0);
    });
    const s = solveOk({
      nodeCount: r.length + 2,
      elements,
      fixedPressure,
      inflow: new Map([[0, Q]]),
    });
    const sum = r.reduce((acc, ri) => acc + Math.pow(ri, -1 / n), 0);
    const p1 = Math.pow(Q / sum, n);
    assertClose(s.pressures[1], p1, { rel: 1e-10, what: `n=${n} P1` });
    assertClose(s.pressures[0], p1 + rs * Math.pow(Q, n), { rel: 1e-10, what: `n=${n} P0` });
    r.forEach((ri, i) =>
      assertClose(s.flows[i + 1], (Q * Math.pow(ri, -1 / n)) / sum, {
        rel: 1e-10,
        what: `n=${n} Q${i}`,
      })
    );
    // The drops returned are each law at its returned flow (to the solve's tolerance: after
    // a last Newton step they are the laws linearised along it), and every branch drops P1.
    elements.forEach((e, k) =>
      assertClose(s.pressureDrops[k], e.law(s.flows[k]).pressureDrop, {
        rel: 1e-10,
        what: `n=${n} ΔP law ${k}`,
      })
    );
    r.forEach((_, i) => assertClose(s.pressureDrops[i + 1], p1, { rel: 1e-10, what: `ΔP${i}` }));
  }
});

Deno.test("power-law loop (a cavity fed by two gates): mass balance and equal path drops", () => {
  // 0 →sprue→ 1; path A: 1 → 2 (runner) → 4 (gate); path B: 1 → 3 → 4; cavity 4 → 5 at 0 Pa.
  // Same n on a path in series adds resistances: path drop (r_run + r_gate)·Qⁿ, so the split is
  // Q_A/Q_B = ((rB_run + rB_gate)/(rA_run + rA_gate))^(1/n) (algebra on the law).
  const n = 0.35;
  const [rA1, rA2, rB1, rB2] = [2e9, 9e9, 5e9, 3e9];
  const problem: HydraulicProblem = {
    nodeCount: 6,
    elements: [
      element(0, 1, powerLaw(3e9, n)),
      element(1, 2, powerLaw(rA1, n)),
      element(2, 4, powerLaw(rA2, n)),
      element(1, 3, powerLaw(rB1, n)),
      element(4, 3, powerLaw(rB2, n)), // written against the flow
      element(4, 5, powerLaw(6e9, n)),
    ],
    fixedPressure: new Map([[5, 0]]),
    inflow: new Map([[0, 3e-5]]),
  };
  const s = solveOk(problem);
  const imbalance = nodalImbalance(problem, s.flows);
  for (let i = 0; i < 5; i++) {
    assertClose(imbalance[i], 0, { abs: 1e-10 * 3e-5, what: `mass balance at node ${i}` });
  }
  const law = (e: number) => problem.elements[e].law(s.flows[e]).pressureDrop;
  assertClose(law(1) + law(2), -law(4) + law(3), { rel: 1e-9, what: "path A drop vs path B drop" });
  const qA = s.flows[1], qB = s.flows[3];
  assertClose(qA / qB, Math.pow((rB1 + rB2) / (rA1 + rA2), 1 / n), { rel: 1e-9, what: "QA/QB" });
  assertClose(qA + qB, 3e-5, { rel: 1e-10, what: "QA + QB" });
});

interface PowerLawElement extends HydraulicElement {
  r: number;
  n: number;
}

/** Random connected network: a random tree plus a few extra loop edges, power laws, outlets. */
function randomNetwork(
  seed: number,
  inflowScale = 1,
): Omit<HydraulicProblem, "elements"> & { elements: PowerLawElement[] } {
  const rand = lcg(seed);
  const nodeCount = 3 + Math.floor(rand() * 25);
  const n = [1, 0.7, 0.5, 0.4, 0.3][Math.floor(rand() * 5)];
  const elements: PowerLawElement[] = [];
  const add = (a: number, b: number) => {
    const r = Math.pow(10, 8 + 4 * rand());
    elements.push({ ...element(a, b, powerLaw(r, n)), r, n });
  };
  for (let i = 1; i < nodeCount; i++) {
    const parent = Math.floor(rand() * i);
    if (rand() < 0.5) add(parent, i);
    else add(i, parent);
  }
  const loops = Math.floor(rand() * 4);
  for (let k = 0; k < loops; k++) {
    const a = Math.floor(rand() * nodeCount), b = Math.floor(rand() * nodeCount);
    if (a !== b) add(a, b);
  }
  const fixedPressure = new Map<number, number>();
  const outlets = 1 + Math.floor(rand() * 3);
  for (let k = 0; k < outlets; k++) {
    fixedPressure.set(1 + Math.floor(rand() * (nodeCount - 1)), rand() < 0.5 ? 0 : rand() * 1e7);
  }
  return {
    nodeCount,
    elements,
    fixedPressure,
    inflow: new Map([[0, inflowScale * 1e-5 * (0.1 + rand())]]),
  };
}

Deno.test("random networks: converge, balance mass at every node, ΔP = h(Q), feed pressure rises with inflow", () => {
  let worstMass = 0, worstLaw = 0;
  for (let seed = 1; seed <= 150; seed++) {
    const problem = randomNetwork(seed);
    // A tighter stop than the default (Newton converges quadratically: about one more
    // iteration) so that ΔP = h(Q) holds to 1e-9 also on elements carrying a small share.
    const s = solveOk(problem, { flowTolerance: 1e-12 });
    const inflow = [...problem.inflow.values()].reduce((a, b) => a + b, 0);
    const imbalance = nodalImbalance(problem, s.flows);
    for (let i = 0; i < problem.nodeCount; i++) {
      if (problem.fixedPressure.has(i)) continue;
      worstMass = Math.max(worstMass, Math.abs(imbalance[i]) / inflow);
      assertClose(imbalance[i], 0, { abs: 1e-10 * inflow, what: `seed ${seed} mass at node ${i}` });
    }
    // Each element's (Q, ΔP) must lie on its curve ΔP = r|Q|ⁿsign(Q), within tolerance in either
    // direction: |h(Q) − ΔP| ≤ 1e-9·(|ΔP| + P_scale), or |Q − h⁻¹(ΔP)| ≤ 1e-8·Q_in with
    // h⁻¹(ΔP) = sign(ΔP)(|ΔP|/r)^(1/n) (algebra on the law). The inverse form is the meaningful
    // one for elements of a stagnant region (Q at rounding level, where for n < 1 h is
    // ill-conditioned: dΔP/dQ → ∞ as Q → 0).
    const pressureScale = Math.max(...s.pressures.map(Math.abs));
    problem.elements.forEach((el, e) => {
      const dp = s.pressures[el.from] - s.pressures[el.to];
      const q = s.flows[e];
      const h = el.law(q).pressureDrop;
      const inverse = Math.sign(dp) * Math.pow(Math.abs(dp) / el.r, 1 / el.n);
      const byPressure = Math.abs(h - dp) / (Math.abs(dp) + pressureScale);
      const byFlow = Math.abs(q - inverse) / inflow;
      const deviation = Math.min(byPressure / 1e-9, byFlow / 1e-8);
      worstLaw = Math.max(worstLaw, deviation);
      assert.ok(
        deviation <= 1,
        `seed ${seed} element ${e}: Q = ${q}, ΔP = ${dp}, h(Q) = ${h}, h⁻¹(ΔP) = ${inverse}`,
      );
    });
    // Monotone network (strictly increasing laws): more inflow, higher feed pressure.
    const more = solveOk({ ...problem, inflow: new Map([[0, 1.1 * inflow]]) });
    assert.ok(more.pressures[0] > s.pressures[0], `seed ${seed}: feed pressure did not rise`);
  }
  if (Deno.env.get("EVENFILL_REPORT")) {
    console.log(
      `worst mass residual ${worstMass.toExponential(2)}, worst law deviation ${
        worstLaw.toExponential(2)
      } of its tolerance`,
    );
  }
});

Deno.test("warm start after a 1 % change of one law converges in ≤ 3 iterations", () => {
  for (let seed = 1; seed <= 60; seed++) {
    const problem = randomNetwork(seed);
    const first = solveOk(problem);
    const changed: HydraulicElement[] = problem.elements.slice();
    const k = seed % changed.length;
    const old = changed[k].law;
    changed[k] = element(changed[k].from, changed[k].to, (q) => {
      const l = old(q);
      return {
        pressureDrop: 1.01 * l.pressureDrop,
        dPressureDropDFlow: 1.01 * l.dPressureDropDFlow,
      };
    });
    const next = { ...problem, elements: changed };
    const warm = solveOk(next, { initialFlows: first.flows.slice() });
    assert.ok(
      warm.diagnostics.iterations <= 3,
      `seed ${seed}: warm start took ${warm.diagnostics.iterations} iterations`,
    );
    const cold = solveOk(next);
    const scale = Math.max(...cold.flows.map(Math.abs));
    cold.flows.forEach((q, e) =>
      assertClose(warm.flows[e], q, { abs: 1e-8 * scale, what: `seed ${seed} warm vs cold Q${e}` })
    );
  }
});

/** A random tree of power-law channels (one n), fed at node 0, every leaf at 0 Pa. */
function randomTree(seed: number): HydraulicProblem {
  const rand = lcg(seed);
  const nodeCount = 3 + Math.floor(rand() * 25);
  const n = [1, 0.7, 0.5, 0.4, 0.3][Math.floor(rand() * 5)];
  const elements: HydraulicElement[] = [];
  const parents = new Set<number>();
  for (let i = 1; i < nodeCount; i++) {
    const parent = Math.floor(rand() * i);
    parents.add(parent);
    elements.push(element(parent, i, powerLaw(Math.pow(10, 8 + 4 * rand()), n)));
  }
  const fixedPressure = new Map<number, number>();
  for (let i = 1; i < nodeCount; i++) if (!parents.has(i)) fixedPressure.set(i, 0);
  return { nodeCount, elements, fixedPressure, inflow: new Map([[0, 1e-5]]) };
}

/** First-order flow correction Σ|h(Q) − ΔP|/h'(Q) / Σ|Q| at a solution, from the laws here. */
function correctionAt(
  problem: HydraulicProblem,
  s: { pressures: Float64Array; flows: Float64Array },
) {
  let num = 0, den = 0;
  problem.elements.forEach((el, e) => {
    const law = el.law(s.flows[e]);
    const dp = s.pressures[el.from] - s.pressures[el.to];
    num += Math.abs((law.pressureDrop - dp) / law.dPressureDropDFlow);
    den += Math.abs(s.flows[e]);
  });
  return num / den;
}

Deno.test("a solve ending on a small Newton step meets its tolerance where it stops, unevaluated", () => {
  // Newton converges quadratically (Kantorovich; Dennis & Schnabel, *Numerical Methods for
  // Unconstrained Optimization and Nonlinear Equations*, thm. 5.2.1): from a start within
  // 1e-7 of the root, one step leaves an error of order 1e-14, so the solve stops after one
  // nodal solve with each law evaluated once (at the start). From 1e-3 it must iterate and
  // evaluate the laws again. Either way the point returned meets the tolerance when the laws
  // are evaluated there by this test. (A network with a stagnant element, one whose flow is
  // at rounding level, always takes the guarded secant step there, and so evaluates again.)
  let unevaluated = 0;
  for (let seed = 1; seed <= 60; seed++) {
    // Odd seeds: a random tree fed at its root with every leaf at 0 Pa (every element flows).
    const problem = seed % 2 === 1 ? randomTree(seed) : randomNetwork(seed);
    const exact = solveOk(problem);
    const inflow = [...problem.inflow.values()].reduce((a, b) => a + Math.abs(b), 0);
    const flowing = exact.flows.every((q) => Math.abs(q) > 1e-9 * inflow);
    for (const offset of [1e-7, 1e-3]) {
      let calls = 0;
      const counted: HydraulicProblem = {
        ...problem,
        elements: problem.elements.map((el) =>
          element(el.from, el.to, (q) => {
            calls++;
            return el.law(q);
          })
        ),
      };
      const random = lcg(seed);
      const start = exact.flows.map((q) => q * (1 + offset * (2 * random() - 1)));
      const s = solveOk(counted, { initialFlows: start });
      const what = `seed ${seed}, start off by ${offset}`;
      if (offset === 1e-7) {
        assert.equal(s.diagnostics.iterations, 1, `${what}: iterations`);
        if (flowing) {
          assert.equal(calls, problem.elements.length, `${what}: law evaluations`);
          unevaluated++;
        }
      } else {
        assert.ok(calls >= 2 * problem.elements.length, `${what}: ${calls} law evaluations`);
      }
      assert.ok(
        correctionAt(problem, s) <= 1e-10,
        `${what}: correction ${correctionAt(problem, s)}`,
      );
      // The drops returned are the laws at the flows returned to the same tolerance, in the
      // solve's own measure: Σ|ΔP_e − h_e(Q_e)|/h'_e ≤ 1e-10·Σ|Q|.
      let off = 0, total = 0;
      problem.elements.forEach((el, e) => {
        const law = el.law(s.flows[e]);
        off += Math.abs(s.pressureDrops[e] - law.pressureDrop) / law.dPressureDropDFlow;
        total += Math.abs(s.flows[e]);
      });
      assert.ok(off <= 1e-10 * total, `${what}: drops off the laws by ${off / total}`);
    }
  }
  assert.ok(unevaluated >= 20, `only ${unevaluated} of 60 networks had every element flowing`);
});

Deno.test("a Newton step across a declared kink of a law is evaluated, not taken as the last", () => {
  // Two parallel branches from node 0 (2e-5 m³/s in) to node 1 at 0 Pa: A linear, r·Q; B
  // r·Q up to |Q| = k and r·(2|Q| − k)·sign(Q) above (its slope doubles at k). With B above
  // the kink, r·Q_A = r·(2·Q_B − k) and Q_A + Q_B = Q give Q_B = (Q + k)/3 (algebra); k is
  // chosen so that this is k·(1 + 1e-8). From Q_B = k·(1 − 1e-8) the first Newton step uses
  // B's slope below the kink and lands on the equal split, 2.5e-8 from the start and 0.5e-8·k
  // from the root: a step small enough to end on, had the kink not been declared.
  const r = 1e10;
  const Q = 2e-5;
  const k = Q / (2 + 3e-8);
  const kinked = (q: number) => {
    const a = Math.abs(q);
    return a <= k
      ? { pressureDrop: r * q, dPressureDropDFlow: r }
      : { pressureDrop: Math.sign(q) * r * (2 * a - k), dPressureDropDFlow: 2 * r };
  };
  let calls = 0;
  const problem: HydraulicProblem = {
    nodeCount: 2,
    elements: [
      element(0, 1, powerLaw(r, 1)),
      {
        from: 0,
        to: 1,
        law: (q) => {
          calls++;
          return kinked(q);
        },
        kinks: [k],
      },
    ],
    fixedPressure: new Map([[1, 0]]),
    inflow: new Map([[0, Q]]),
  };
  const start = k * (1 - 1e-8);
  const s = solveOk(problem, { initialFlows: Float64Array.from([Q - start, start]) });
  assert.ok(calls >= 2, `B's law evaluated ${calls} times`);
  assertClose(s.flows[1], (Q + k) / 3, { rel: 1e-12, what: "Q_B" });
  assert.ok(correctionAt(problem, s) <= 1e-10, `correction ${correctionAt(problem, s)}`);
});

Deno.test("initialLaws: known laws are not evaluated at the start; the unknown ones are", () => {
  // A solve started where another ended, with that solve's drops and slopes given as known,
  // evaluates no law at the start; its first Newton step is tiny, so the point it reaches ends
  // the solve: no law is evaluated at all, and the flows are the first solve's. With every
  // other element known, the start evaluates just the others. (A tree whose resistances
  // differ by orders of magnitude can leave a branch at rest, which the solve always
  // re-linearises by its secant, evaluating that law: such trees are left out of the counts.)
  let unevaluated = 0;
  for (let seed = 1; seed <= 40; seed += 2) {
    const problem = randomTree(seed);
    const first = solveOk(problem);
    const m = problem.elements.length;
    const evaluated = new Uint8Array(m);
    let calls = 0;
    const counted: HydraulicProblem = {
      ...problem,
      elements: problem.elements.map((el, e) =>
        element(el.from, el.to, (q) => {
          calls++;
          evaluated[e] = 1;
          return el.law(q);
        })
      ),
    };
    const flowing = first.flows.every((q) => Math.abs(q) > 1e-9 * 1e-5);
    for (const every of [1, 2]) {
      const known = new Uint8Array(m).map((_, e) => (e % every === 0 ? 1 : 0));
      calls = 0;
      evaluated.fill(0);
      const again = solveOk(counted, {
        initialFlows: first.flows.slice(),
        initialLaws: { known, drop: first.pressureDrops, slope: first.pressureDropSlopes },
      });
      const what = `seed ${seed}, every ${every}`;
      assert.equal(again.diagnostics.iterations, 1, `${what}: iterations`);
      if (flowing) {
        for (let e = 0; e < m; e++) {
          assert.equal(evaluated[e], known[e] ? 0 : 1, `${what}: element ${e} evaluated`);
        }
        assert.equal(calls, m - known.reduce((a, b) => a + b, 0), `${what}: law evaluations`);
      }
      first.flows.forEach((q, e) =>
        assertClose(again.flows[e], q, { rel: 1e-10, abs: 1e-10 * 1e-5, what: `${what}: Q${e}` })
      );
      assert.ok(correctionAt(problem, again) <= 1e-10, `${what}: correction`);
    }
    if (flowing) unevaluated++;
  }
  assert.ok(unevaluated >= 10, `only ${unevaluated} of 20 trees had every branch flowing`);
  const tree = randomTree(3);
  const zeros = () => new Float64Array(tree.elements.length);
  assert.throws(
    () =>
      solveHydraulics(tree, {
        initialLaws: { known: new Uint8Array(tree.elements.length), drop: zeros(), slope: zeros() },
      }),
    /initialLaws needs initialFlows/,
  );
});

Deno.test("topology errors come back as values: floating component, self-loop, bad index, lone node", () => {
  const law = powerLaw(1e10, 0.5);
  const base = { fixedPressure: new Map([[2, 0]]), inflow: new Map([[0, 1e-5]]) };
  const cases: [string, HydraulicProblem, RegExp][] = [
    [
      "component 3–4 without a fixed pressure",
      {
        ...base,
        nodeCount: 5,
        elements: [element(0, 1, law), element(1, 2, law), element(3, 4, law)],
      },
      /3, 4/,
    ],
    [
      "self-loop",
      { ...base, nodeCount: 3, elements: [element(0, 2, law), element(1, 1, law)] },
      /1/,
    ],
    ["index out of range", { ...base, nodeCount: 3, elements: [element(0, 3, law)] }, /3/],
    ["negative index", { ...base, nodeCount: 3, elements: [element(-1, 2, law)] }, /-1/],
    ["fractional index", { ...base, nodeCount: 3, elements: [element(0.5, 2, law)] }, /0\.5/],
    ["isolated free node", {
      ...base,
      nodeCount: 4,
      elements: [element(0, 2, law), element(1, 2, law)],
    }, /3/],
    [
      "fixed pressure at a missing node",
      { ...base, nodeCount: 3, elements: [element(0, 2, law)], fixedPressure: new Map([[7, 0]]) },
      /7/,
    ],
  ];
  for (const [what, problem, names] of cases) {
    const s = solveHydraulics(problem);
    assert.equal(s.ok, false, what);
    if (!s.ok) {
      assert.equal(s.code, "invalid_topology", what);
      assert.match(s.message, names, `${what}: message names the nodes`);
    }
  }
});

Deno.test("non-convergence is a value with diagnostics", () => {
  const problem = randomNetwork(3);
  const nonlinear = {
    ...problem,
    elements: problem.elements.map((el) => element(el.from, el.to, powerLaw(1e10, 0.3))),
  };
  const s = solveHydraulics(nonlinear, { maxIterations: 1 });
  assert.equal(s.ok, false);
  if (!s.ok) {
    assert.equal(s.code, "did_not_converge");
    assert.equal(s.diagnostics?.iterations, 1);
  }
});

Deno.test("a topology checked beforehand gives the same solution, bit for bit, and must fit the problem", () => {
  // Two power-law branches in parallel behind a feed: by hand, the split Q1/Q2 = (r2/r1)^(1/n).
  const n = 0.4;
  const problem: HydraulicProblem = {
    nodeCount: 4,
    elements: [
      element(0, 1, powerLaw(2e9, n)),
      element(1, 2, powerLaw(1e9, n)),
      element(1, 3, powerLaw(3e9, n)),
    ],
    fixedPressure: new Map([[2, 0], [3, 0]]),
    inflow: new Map([[0, 1e-5]]),
  };
  const prepared = hydraulicTopology(problem);
  assert.ok(prepared.ok);
  const plain = solveHydraulics(problem);
  const reused = solveHydraulics(problem, { topology: prepared.topology });
  assert.ok(plain.ok && reused.ok);
  // Exact on purpose: only the checks are skipped, the arithmetic is the same.
  assert.deepEqual(reused.flows, plain.flows);
  assert.deepEqual(reused.pressures, plain.pressures);
  assertClose(reused.flows[1] / reused.flows[2], Math.pow(3, 1 / n), {
    rel: 1e-8,
    what: "parallel split (r2/r1)^(1/n)",
  });
  assert.throws(
    () => solveHydraulics({ ...problem, nodeCount: 5 }, { topology: prepared.topology }),
    RangeError,
  );
  const floating = hydraulicTopology({ ...problem, fixedPressure: new Map() });
  assert.ok(!floating.ok && floating.code === "invalid_topology");
});
