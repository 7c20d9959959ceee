/** Version of the simulation engine, stored with every run (bump when results would change). */
export const ENGINE_VERSION = "burstwise-ssa/0.1.0";
