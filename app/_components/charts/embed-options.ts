import type { EmbedOptions } from "vega-embed";
import { expressionInterpreter } from "vega-interpreter";

/**
 * Options for every vega chart. SVG keeps charts crisp and lets tests find the marks; no vega
 * menu (our own buttons). `ast` + the interpreter evaluate vega expressions without compiling
 * them into functions, so the content security policy needs no 'unsafe-eval'.
 */
export const EMBED_OPTIONS: EmbedOptions = { actions: false, renderer: "svg", ast: true, expr: expressionInterpreter };
