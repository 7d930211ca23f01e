/**
 * Builds the Poiseuille-number tables embedded in `src/physics/noncircular.ts` from
 * converged FD runs of `_poisson_fd.ts` (20 and 40 cells across the shorter side, Richardson-extrapolated;
 * about 1e-5 relative against Shah & London's semicircle, square and 2:1 rectangle).
 * Run: `deno run tests/physics/_build_fre_tables.ts` and paste its output.
 */
import { poiseuilleNumberFd } from "./_poisson_fd.ts";

const fmt = (v: number) => v.toFixed(5);
const grid = (lo: number, hi: number, step: number) => {
  const out: number[] = [];
  for (let k = 0; lo + k * step <= hi + 1e-12; k++) out.push(+(lo + k * step).toFixed(6));
  return out;
};

const dOffsets = grid(-0.95, 0.95, 0.05);
const dValues = dOffsets.map((e) =>
  poiseuilleNumberFd({ kind: "d_shape", radius: 1, flatOffset: e }, 20).fRe
);
console.log(`/** fRe of d_shape at flatOffset/radius = −0.95 … 0.95 step 0.05. */`);
console.log(`const D_SHAPE_FRE = [${dValues.map(fmt).join(", ")}];`);

const parabolicU = grid(0.05, 0.95, 0.025);
const pValues = parabolicU.map((u) =>
  poiseuilleNumberFd({ kind: "parabolic", width: 1, depth: u / (1 - u) }, 20).fRe
);
console.log(`/** fRe of parabolic at u = depth/(depth + width) = 0.05 … 0.95 step 0.025. */`);
console.log(`const PARABOLIC_FRE = [${pValues.map(fmt).join(", ")}];`);

const betas = grid(0, 1, 0.1);
const trapU = grid(0.05, 0.95, 0.05);
console.log(
  `/** fRe of trapezoid, rows bottom/top = 0 … 1 step 0.1, columns u = depth/(depth + top) = 0.05 … 0.95 step 0.05. */`,
);
console.log(`const TRAPEZOID_FRE = [`);
for (const beta of betas) {
  const row = trapU.map((u) =>
    poiseuilleNumberFd(
      { kind: "trapezoid", topWidth: 1, bottomWidth: beta, depth: u / (1 - u) },
      20,
    ).fRe
  );
  console.log(`  [${row.map(fmt).join(", ")}],`);
}
console.log(`];`);
