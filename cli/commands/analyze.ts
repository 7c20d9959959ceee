/** `analyze <file>`: steady state, eigenvalues, stability and LNA as the JSON of CONTRACT.md §2. */
import { checkOverrides, CircuitError } from "@/lib/schemas/circuit";
import { analyze, SteadyStateError } from "@/ssa/analyze";
import { compileModel } from "@/ssa/model";
import { OdeError } from "@/ssa/ode";

import { CliError, overridesFlag, parseFlags, readCircuitFile, writeResult, type Command } from "../common";

export const command: Command = {
  summary: "deterministic steady state, Jacobian eigenvalues, stable or oscillatory (Hopf), LNA noise",
  help: `Usage: analyze <file> [options]

Finds the deterministic steady state of a circuit file (or SBML file): the mean field is
integrated until it settles, then refined by damped Newton. Prints as JSON
  steady_state  amounts at the steady state (model units unless --units molecules)
  eigenvalues   of the Jacobian there, {re, im} in 1/time, largest real part first
                (an exact 0 for each conservation law, e.g. A + B in A <-> B)
  stable        every other eigenvalue has a negative real part
  oscillatory   a complex pair has a positive real part (past a Hopf bifurcation)
  lna           linear noise approximation at a stable steady state, in molecules:
                covariance (species order as in the file), cv and fano per species;
                null when the steady state is not stable
  warnings      caveats (the SBML import's, then the analysis's), [] when none; also
                printed on stderr, one "warning: <code>: <message>" line each

Options:
  --set name=value         override a parameter (repeatable)
  --units model|molecules  units of steady_state (default model)
  --out FILE               write the JSON there instead of stdout

Exit codes: 0 success, 2 bad input (the message names the field), 1 no steady state found or
another failure of the tool.`,
  async run(argv) {
    const flags = parseFlags(argv, { set: "list", units: "string", out: "string" }, "analyze");
    if (flags.positional.length > 1) throw new CliError(`${flags.positional[1]}: unexpected argument (see \`analyze --help\`)`);
    const { circuit, warnings } = await readCircuitFile(flags.positional[0], "analyze");
    const units = (flags.values.units as string | undefined) ?? "model";
    if (units !== "model" && units !== "molecules") throw new CliError(`--units: must be "model" or "molecules", got "${units}"`);
    const overrides = overridesFlag(flags);
    try {
      checkOverrides(circuit, overrides);
    } catch (e) {
      if (e instanceof CircuitError) throw new CliError(e.message.replace(/^overrides\./, "--set "));
      throw e;
    }
    let result;
    try {
      result = analyze(compileModel(circuit, overrides), { units });
    } catch (e) {
      if (e instanceof SteadyStateError || e instanceof OdeError) throw new CliError(`analyze: ${e.message}`, 1);
      throw e;
    }
    writeResult(result, warnings, flags.values.out as string | undefined);
  },
};
