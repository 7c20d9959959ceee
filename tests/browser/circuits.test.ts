import { readFile } from "node:fs/promises";

import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { getTemplate } from "@/lib/view/circuit-templates";
import { analyze } from "@/ssa/analyze";
import { compileModel } from "@/ssa/model";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser } from "../support/client";

const NAME = `Ring timer browser ${Date.now().toString(36)}`;
const PASSWORD = "sentinel-demo";

let ctx: BrowserContext;
let page: Page;
let labPath = "";
let circuitPath = "";
let circuitId = "";
let sbmlPath = "";
/** Script errors and React warnings seen in the modeler's page (hydration mismatches show up here). */
const consoleErrors: string[] = [];

/** The engine's own analysis of the ring timer with Hill coefficient n, to know which verdict and warnings to expect. */
function expectedAnalysis(n: number) {
  const c = getTemplate("ring-timer")!;
  c.parameters!.n = n;
  const model = compileModel(c);
  const a = analyze(model);
  const lowCopy = Object.entries(a.steady_state).filter(([, v]) => v * model.omega < 10).map(([id]) => id);
  return { ...a, lowCopy, omega: model.omega };
}

/** The message shown for an input, found through its aria-errormessage. */
async function errorOf(page: Page, label: string): Promise<string | null> {
  const input = page.getByLabel(label, { exact: true });
  const id = await input.getAttribute("aria-errormessage");
  if (!id) return null;
  return page.locator(`[id="${id}"]`).textContent();
}

beforeAll(async () => {
  ctx = await openBrowser();
  page = await ctx.newPage();
  page.on("console", (m) => {
    // failed fetches (the 404 page, a 422 analysis) are expected; anything else is a bug
    if (m.type() === "error" && !m.text().startsWith("Failed to load resource")) consoleErrors.push(m.text());
  });
  page.on("pageerror", (e) => consoleErrors.push(e.message));
});
afterAll(async () => {
  await ctx?.close();
});

describe("circuits as the demo modeler", () => {
  it("creates a circuit from the ring-timer template and lands in the editor", async () => {
    await signInAs(page, "modeler@sentinel.example", PASSWORD);
    await page.waitForURL(/\/labs\/\d+$/);
    labPath = new URL(page.url()).pathname;
    await page.getByRole("navigation", { name: "Sections" }).getByRole("link", { name: "Circuits" }).click();
    await page.getByRole("heading", { name: "Circuits", level: 1 }).waitFor();
    await page.getByRole("button", { name: "New circuit" }).click();
    await page.getByRole("radio", { name: "Ring timer" }).check();
    expect(await page.getByLabel("Circuit name").inputValue()).toBe("Ring timer, design R2");
    await page.getByLabel("Circuit name").fill(NAME);
    await shot(page, "circuits-01-create");
    await page.getByRole("button", { name: "Create circuit" }).click();
    await page.waitForURL(/\/circuits\/\d+$/);
    circuitPath = new URL(page.url()).pathname;
    circuitId = circuitPath.split("/").pop()!;
    await page.getByRole("heading", { level: 1, name: NAME }).waitFor();
    expect(await page.getByLabel("Value of n", { exact: true }).inputValue()).toBe("4");
    // an empty unit shows the unit that follows from use as its placeholder
    expect(await page.getByLabel("Unit of K", { exact: true }).getAttribute("placeholder")).toBe("nM");
    expect(await page.getByLabel("Unit of K", { exact: true }).inputValue()).toBe("");
  });

  it("draws the loop A → B → C ⊣ A in the wiring view", async () => {
    const svg = page.getByTestId("wiring-svg");
    await svg.waitFor();
    expect(await svg.locator('path[data-kind="activation"]').count()).toBe(2);
    expect(await svg.locator('path[data-kind="repression"]').count()).toBe(1);
    const edges = await page.getByTestId("wiring-edges").getByRole("listitem").allTextContents();
    expect(edges).toEqual(["C represses A (make_A)", "A activates B (make_B)", "B activates C (make_C)"]);
    await shot(page, "circuits-02-editor");
  });

  it("an unknown parameter in K shows its message beside that field and blocks saving until fixed", async () => {
    const k = page.getByLabel("K of make_B", { exact: true });
    await k.fill("Kc");
    expect(await k.getAttribute("aria-invalid")).toBe("true");
    expect(await errorOf(page, "K of make_B")).toBe('unknown parameter "Kc"');
    expect(await page.getByRole("button", { name: "Save version" }).isDisabled()).toBe(true);
    expect(await page.getByTestId("draft-state").textContent()).toBe("1 problem to fix before saving.");
    await shot(page, "circuits-03-field-error");
    await k.fill("K");
    expect(await k.getAttribute("aria-invalid")).toBeNull();
    expect(await page.getByRole("button", { name: "Save version" }).isDisabled()).toBe(false);
  });

  it("a negative rate, an unknown species and a broken formula each show at their field, and nothing is saved", async () => {
    await page.getByLabel("Value of g", { exact: true }).fill("-0.2");
    await page.getByLabel("Reactants of lose_A", { exact: true }).fill("Q");
    await page.getByLabel("Rate law of make_C", { exact: true }).selectOption("expression");
    await page.getByLabel("Formula of make_C", { exact: true }).fill("vC * B^n / (K^n + B^");
    expect(await errorOf(page, "k of lose_B")).toBe('must be >= 0 (parameter "g" is -0.2)');
    expect(await errorOf(page, "Reactants of lose_A")).toBe('unknown species "Q"');
    expect(await errorOf(page, "Formula of make_C")).toMatch(/^cannot parse formula/);
    expect(await page.getByRole("button", { name: "Save version" }).isDisabled()).toBe(true);
    await shot(page, "circuits-04-several-errors");
    await page.getByRole("button", { name: "Discard changes" }).click();
    expect(await page.getByLabel("Value of g", { exact: true }).inputValue()).toBe("0.2");
    const res = await page.request.get(`/api/circuits/${circuitId}`);
    expect((await res.json()).versions).toHaveLength(1);
  });

  it("saves a new version with a message after changing n, and an unchanged save says so", async () => {
    await page.getByLabel("Value of n", { exact: true }).fill("2");
    expect(await page.getByTestId("draft-state").textContent()).toBe("Unsaved changes.");
    await page.getByLabel("Message (optional)").fill("lower cooperativity");
    await page.getByRole("button", { name: "Save version" }).click();
    await page.getByRole("status").filter({ hasText: "Saved as version 2." }).waitFor();
    expect(await page.getByLabel("Value of n", { exact: true }).inputValue()).toBe("2");
    await page.getByRole("button", { name: "Save version" }).click();
    await page.getByRole("status").filter({ hasText: "No change" }).waitFor();
    expect(await page.getByRole("status").filter({ hasText: "No change" }).textContent()).toContain("identical to version 2");
  });

  it("the raw JSON view edits the same draft, reports a syntax error and returns to the form only when readable", async () => {
    await page.getByRole("button", { name: "Raw JSON" }).click();
    const raw = page.getByLabel("Circuit file (burstwise.circuit/1, or /2 with a schedule)");
    const text = await raw.inputValue();
    expect(text).toContain('"n": 2');
    await raw.fill(`${text.replace('"n": 2', '"n": 3')}}`);
    expect(await page.getByTestId("json-issues").textContent()).toMatch(/^JSON: /);
    await page.getByRole("button", { name: "Form", exact: true }).click();
    await page.getByRole("alert").filter({ hasText: "Fix the JSON first" }).waitFor();
    await raw.fill(text.replace('"n": 2', '"n": 3'));
    expect(await page.getByTestId("json-issues").count()).toBe(0);
    await page.getByRole("button", { name: "Form", exact: true }).click();
    expect(await page.getByLabel("Value of n", { exact: true }).inputValue()).toBe("3");
    await page.getByRole("button", { name: "Discard changes" }).click();
    expect(await page.getByLabel("Value of n", { exact: true }).inputValue()).toBe("2");
  });

  it("the history lists both versions with who and the message, and the diff names the changed parameter", async () => {
    await page.getByRole("navigation", { name: "Circuit views" }).getByRole("link", { name: "Versions" }).click();
    await page.getByRole("heading", { name: "History" }).waitFor();
    const rows = page.getByTestId("version-row");
    expect(await rows.count()).toBe(2);
    expect(await rows.nth(0).textContent()).toContain("lower cooperativity");
    expect(await rows.nth(0).textContent()).toContain("modeler@sentinel.example");
    expect(await page.getByTestId("diff-title").textContent()).toBe("Changes from v1 to v2");
    expect(await page.getByTestId("diff-parameter-n").textContent()).toBe("n changed: value: 4 → 2");
    expect(await page.getByTestId("version-diff").getByRole("listitem").count()).toBe(1);
    await shot(page, "circuits-05-versions");
  });

  it("the counts view shows Ω in molecules per nM and flags the low-copy species", async () => {
    const expected = expectedAnalysis(2);
    await page.getByRole("navigation", { name: "Circuit views" }).getByRole("link", { name: "Counts view" }).click();
    await page.getByTestId("omega").waitFor();
    // Ω = 1 fL · N_A · 1 nM = 0.602214076 molecules per nM (SI definition of N_A, exact)
    expect(await page.getByTestId("omega").textContent()).toBe("Ω = 0.602214 molecules per nM");
    await page.getByText("Steady state from the stability analysis").waitFor();
    expect(expected.lowCopy.length).toBeGreaterThan(0);
    for (const id of ["A", "B", "C"]) {
      const warned = await page.getByTestId(`counts-row-${id}`).getByTestId("low-copy").count();
      expect(warned, `low-copy warning for ${id}`).toBe(expected.lowCopy.includes(id) ? 1 : 0);
    }
    expect(await page.getByRole("note").count()).toBe(1);
    // the conversion rules are stated once above the constants table, not on every row
    expect(await page.getByTestId("constants-formulas").textContent()).toContain("c = k·Πν!/Ω^(m−1)");
    const constants = page.getByRole("table", { name: "Rate constants in molecules" });
    expect(await constants.getByText("Πν!").count()).toBe(0);
    expect(await page.getByRole("table", { name: "Species in molecules" }).getByRole("columnheader").allTextContents()).toEqual(
      ["Species", "Initial (nM)", "Initial (molecules)", "Initial count", "Steady state (molecules)", "Note"],
    );
    await shot(page, "circuits-06-counts");
  });

  it("the stability panel gives the verdict, the eigenvalue chart and the LNA noise of version 2", async () => {
    const expected = expectedAnalysis(2);
    await page.getByRole("navigation", { name: "Circuit views" }).getByRole("link", { name: "Stability" }).click();
    await page.getByTestId("verdict").waitFor();
    const verdict = await page.getByTestId("verdict").textContent();
    expect(verdict).toContain(expected.stable ? "returns to its steady state" : "sustained oscillations (Hopf)");
    await page.getByTestId("eigen-chart").locator("svg").first().waitFor();
    const chartText = await page.getByTestId("eigen-chart").locator("svg").first().textContent();
    expect(chartText).toContain("Re λ (1/min)");
    expect(chartText).toContain("Im λ (1/min)");
    if (expected.stable) await page.getByRole("table", { name: "LNA CV and Fano factor per species" }).waitFor();
    // the explanations sit folded in one help text
    const help = page.getByTestId("stability-help");
    expect(await help.getAttribute("open")).toBeNull();
    await help.getByText("How to read this").click();
    await help.getByText("dashed imaginary axis", { exact: false }).waitFor();
    await page.getByRole("note").waitFor();
    await shot(page, "circuits-07-stability");
  });

  it("version 1 (n = 4) reads oscillatory and explains why there is no LNA", async () => {
    const expected = expectedAnalysis(4);
    expect(expected.oscillatory).toBe(true);
    await page.getByLabel("Version", { exact: true }).selectOption({ index: 1 });
    await page.waitForURL(/\/stability\?version=\d+/);
    await page.getByTestId("verdict").filter({ hasText: "Oscillatory" }).waitFor();
    expect(await page.getByTestId("verdict").textContent()).toContain("A complex pair of eigenvalues has positive real part: expect sustained oscillations (Hopf).");
    expect(await page.getByTestId("lna-none").textContent()).toContain("linearises the noise around a stable steady state");
    await shot(page, "circuits-08-oscillatory");
  });

  it("the circuits list finds the circuit by name and sorts by versions", async () => {
    await page.goto(`${labPath}/circuits`);
    await page.getByLabel("Search by name").fill(NAME.slice(-8));
    const rows = page.getByRole("table", { name: "Circuits of this lab" }).locator("tbody tr");
    expect(await rows.count()).toBe(1);
    expect(await rows.first().textContent()).toContain(NAME);
    expect(await rows.first().textContent()).toContain("modeler@sentinel.example");
    await page.getByLabel("Search by name").fill("no such circuit at all");
    expect(await rows.first().textContent()).toContain("No circuit name contains");
    await page.getByLabel("Search by name").fill("");
    await page.getByRole("button", { name: /^Versions/ }).click();
    expect(await page.getByRole("columnheader", { name: /Versions/ }).getAttribute("aria-sort")).toBe("descending");
    await shot(page, "circuits-09-list");
  });

  it("an uploaded circuit file with a bad reference is stopped before sending, naming the field", async () => {
    await page.getByRole("button", { name: "New circuit" }).click();
    await page.getByRole("radio", { name: "Upload a file" }).check();
    const bad = getTemplate("birth-death")!;
    bad.reactions[1].rate = { law: "mass_action", k: "gX" };
    await page.getByLabel("Circuit file or SBML").setInputFiles({ name: "bad.circuit.json", mimeType: "application/json", buffer: Buffer.from(JSON.stringify(bad)) });
    await page.getByRole("alert").filter({ hasText: 'reactions[1].rate.k: unknown parameter "gX"' }).waitFor();
    expect(await page.getByRole("button", { name: "Create circuit" }).isDisabled()).toBe(true);
  });

  it("an SBML upload becomes a circuit whose history says it came from SBML", async () => {
    await page.getByLabel("Circuit file or SBML").setInputFiles("tests/fixtures/sbml-l3v1-gene.xml");
    await page.getByText("SBML; Burstwise converts it").waitFor();
    await page.getByRole("button", { name: "Create circuit" }).click();
    await page.waitForURL(/\/circuits\/\d+$/);
    await page.getByRole("heading", { level: 1, name: "Gene test, Level 3" }).waitFor();
    sbmlPath = new URL(page.url()).pathname;
    expect(await page.getByLabel("Formula of express", { exact: true }).inputValue()).toContain("K^h");
    await page.getByRole("navigation", { name: "Circuit views" }).getByRole("link", { name: "Versions" }).click();
    expect(await page.getByTestId("version-row").first().textContent()).toContain("SBML import");
    await shot(page, "circuits-10a-sbml-versions");
  });

  it("a parameter's unit and note are typed, checked beside the note, saved, and read back after a reload", async () => {
    await page.goto(sbmlPath);
    const unit = page.getByLabel("Unit of d", { exact: true });
    const note = page.getByLabel("Note of d", { exact: true });
    expect(await unit.inputValue()).toBe("");
    await note.fill("x".repeat(501));
    expect(await errorOf(page, "Note of d")).toBe("must be at most 500 characters");
    expect(await page.getByRole("button", { name: "Save version" }).isDisabled()).toBe(true);
    await unit.fill("1/h");
    await note.fill("loss by dilution and decay");
    await page.getByLabel("Message (optional)").fill("unit and note for d");
    await page.getByRole("button", { name: "Save version" }).click();
    await page.getByRole("status").filter({ hasText: "Saved as version 2." }).waitFor();
    await page.reload();
    expect(await page.getByLabel("Unit of d", { exact: true }).inputValue()).toBe("1/h");
    expect(await page.getByLabel("Note of d", { exact: true }).inputValue()).toBe("loss by dilution and decay");
    await shot(page, "circuits-10b-parameter-unit-note");
    await page.getByRole("navigation", { name: "Circuit views" }).getByRole("link", { name: "Versions" }).click();
    expect(await page.getByTestId("diff-parameter-d").textContent()).toBe("d changed: unit: none → 1/h; note: none → loss by dilution and decay");
  });

  it("a schedule change is added in the form, checked at its input, saved as format /2 and read back after a reload", async () => {
    await page.goto(sbmlPath);
    expect(await page.getByText("No schedule: inputs stay as set for the whole run.").count()).toBe(1);
    await page.getByRole("button", { name: "Add change" }).click();
    const time = page.getByLabel(/^Time \(.+\) of change 1$/);
    const sets = page.getByLabel("Sets of change 1", { exact: true });
    await time.fill("2");
    await sets.fill("d = d_high");
    expect(await errorOf(page, "Sets of change 1")).toBe('unknown parameter "d_high"');
    expect(await page.getByRole("button", { name: "Save version" }).isDisabled()).toBe(true);
    await sets.fill("d 0.5");
    expect(await errorOf(page, "Sets of change 1")).toMatch(/^cannot read "d 0.5"/);
    await sets.fill("d = 0.5");
    await page.getByLabel("Kind of change 1", { exact: true }).selectOption("when");
    await page.getByLabel("Condition of change 1", { exact: true }).fill("nothing > 3");
    expect(await errorOf(page, "Condition of change 1")).toMatch(/nothing/);
    await page.getByLabel("Kind of change 1", { exact: true }).selectOption("at");
    expect(await time.inputValue()).toBe("2");
    await page.getByLabel("Message (optional)").fill("step d at 2");
    await page.getByRole("button", { name: "Save version" }).click();
    await page.getByRole("status").filter({ hasText: "Saved as version 3." }).waitFor();
    await page.reload();
    expect(await page.getByLabel(/^Time \(.+\) of change 1$/).inputValue()).toBe("2");
    expect(await page.getByLabel("Sets of change 1", { exact: true }).inputValue()).toBe("d = 0.5");
    await shot(page, "circuits-10c-schedule");
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "circuit file" }).click()]);
    const saved = JSON.parse(await readFile((await download.path())!, "utf8"));
    expect(saved.format).toBe("burstwise.circuit/2");
    expect(saved.schedule).toEqual([{ at: 2, set: { d: 0.5 } }]);
  });

  it("the circuit file of a version downloads as JSON that parses back to the same circuit", async () => {
    await page.goto(circuitPath);
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "circuit file" }).click()]);
    expect(download.suggestedFilename()).toMatch(/^ring-timer-browser-[a-z0-9]+-v2\.circuit\.json$/);
    const saved = JSON.parse(await readFile((await download.path())!, "utf8"));
    expect(saved.parameters.n).toBe(2);
    expect(saved.name).toBe(NAME);
  });

  it("a circuit of another lab is not found under this lab", async () => {
    const outsider = await newUser("outsider");
    const made = await outsider.client.request("POST", "/api/circuits", { lab_id: outsider.labId, circuit: getTemplate("birth-death") });
    expect(made.status).toBe(201);
    const res = await page.goto(`${labPath}/circuits/${made.json.id}`);
    expect(res?.status()).toBe(404);
    await page.getByRole("heading", { name: "Not found" }).waitFor();
  });

  it("a circuit with no steady state (the blank one grows forever) says so, and counts fall back to initial counts", async () => {
    await page.goto(`${labPath}/circuits`);
    await page.getByRole("button", { name: "New circuit" }).click();
    await page.getByRole("radio", { name: "Blank" }).check();
    await page.getByLabel("Circuit name").fill(`${NAME} blank`);
    await page.getByRole("button", { name: "Create circuit" }).click();
    await page.waitForURL(/\/circuits\/\d+$/);
    const blankPath = new URL(page.url()).pathname;
    await page.goto(`${blankPath}/stability`);
    await page.getByRole("alert").filter({ hasText: "No steady state could be analysed" }).waitFor();
    expect(await page.getByRole("alert").filter({ hasText: "No steady state" }).textContent()).toContain("grow without bound");
    await page.goto(`${blankPath}/counts`);
    await page.getByText("The stability analysis failed").waitFor();
    // X starts at 0 molecules, below the ~10-molecule threshold
    expect(await page.getByTestId("counts-row-X").getByTestId("low-copy").count()).toBe(1);
    expect(await page.getByTestId("omega").textContent()).toBe("Ω = 1 (amounts are already molecules)");
    // amounts already in molecules: one "Initial (molecules)" column, not two
    expect(await page.getByRole("table", { name: "Species in molecules" }).getByRole("columnheader").allTextContents()).toEqual(
      ["Species", "Initial (molecules)", "Initial count", "Steady state (molecules)", "Note"],
    );
  });

  it("the modeler's pages logged no script errors or hydration warnings", () => {
    expect(consoleErrors).toEqual([]);
  });

  it("fits a tablet width without horizontal scrolling", async () => {
    await page.setViewportSize({ width: 768, height: 1024 });
    await page.goto(circuitPath);
    await page.getByTestId("wiring-svg").waitFor();
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    await shot(page, "circuits-10-editor-tablet");
    await page.goto(`${circuitPath}/stability`);
    await page.getByTestId("verdict").waitFor();
    await page.getByTestId("eigen-chart").locator("svg").first().waitFor();
    expect(await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBeLessThanOrEqual(0);
    await shot(page, "circuits-11-stability-tablet");
    await page.setViewportSize({ width: 1280, height: 800 });
  });
});

describe("circuits as the demo reviewer", () => {
  let rctx: BrowserContext;
  let rpage: Page;
  beforeAll(async () => {
    rctx = await openBrowser();
    rpage = await rctx.newPage();
    await signInAs(rpage, "reviewer@sentinel.example", PASSWORD);
    await rpage.waitForURL(/\/labs\/\d+$/);
  });
  afterAll(async () => {
    await rctx?.close();
  });

  it("the list has no create controls", async () => {
    await rpage.goto(`${labPath}/circuits`);
    await rpage.getByRole("table", { name: "Circuits of this lab" }).waitFor();
    expect(await rpage.getByRole("button", { name: "New circuit" }).count()).toBe(0);
    expect(await rpage.getByRole("link", { name: NAME, exact: true }).count()).toBe(1);
  });

  it("the editor shows everything read-only: no save, add or remove controls, disabled inputs", async () => {
    await rpage.goto(circuitPath);
    await rpage.getByTestId("wiring-svg").waitFor();
    expect(await rpage.getByLabel("Value of n", { exact: true }).inputValue()).toBe("2");
    expect(await rpage.getByLabel("Value of n", { exact: true }).isDisabled()).toBe(true);
    expect(await rpage.getByRole("button", { name: "Save version" }).count()).toBe(0);
    expect(await rpage.getByRole("button", { name: /^\+ Add/ }).count()).toBe(0);
    expect(await rpage.getByRole("button", { name: /^Remove/ }).count()).toBe(0);
    expect(await rpage.getByRole("link", { name: /Launch run/ }).count()).toBe(0);
    await rpage.getByRole("button", { name: "Raw JSON" }).click();
    expect(await rpage.getByLabel("Circuit file (burstwise.circuit/1, or /2 with a schedule)").getAttribute("readonly")).not.toBeNull();
    await shot(rpage, "circuits-12-reviewer");
  });

  it("the counts view and stability panel read the same for a reviewer", async () => {
    await rpage.goto(`${circuitPath}/counts`);
    await rpage.getByTestId("omega").waitFor();
    await rpage.goto(`${circuitPath}/versions`);
    expect(await rpage.getByTestId("version-row").count()).toBe(2);
  });

  it("a direct save from the reviewer's session is refused with 403", async () => {
    const res = await rpage.request.post(`/api/circuits/${circuitId}/versions`, { data: { circuit: getTemplate("ring-timer") } });
    expect(res.status()).toBe(403);
  });
});
