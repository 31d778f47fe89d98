#!/usr/bin/env node
// Accessibility check of built pages: axe-core run inside Debian's headless Chromium,
// driven through the DevTools protocol (chrome-remote-interface). No browser download.
//
//   node tools/axe/check.js [--chromium /usr/bin/chromium] page.html[#fragment] ...
//
// Prints one JSON object on stdout: {"pages": [{"page", "violations": [{"id", "impact",
// "help", "nodes": [{"target", "html", "summary"}]}]}], "axe": version}.
// Exit 0 when the check ran (whatever it found), 2 when it could not run.
"use strict";

const { spawn } = require("child_process");
const fs = require("fs");
const os = require("os");
const path = require("path");
const { pathToFileURL } = require("url");
const CDP = require("chrome-remote-interface");
const axe = require("axe-core");

// WCAG 2.0, 2.1 and 2.2, levels A and AA: the tags axe-core gives these criteria.
const TAGS = ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "wcag22a", "wcag22aa"];

function parseArgs(argv) {
  const out = { chromium: "/usr/bin/chromium", pages: [] };
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === "--chromium") { out.chromium = argv[++i]; } else { out.pages.push(argv[i]); }
  }
  return out;
}

function sleep(ms) { return new Promise((r) => setTimeout(r, ms)); }

async function devtoolsPort(profile, child) {
  const file = path.join(profile, "DevToolsActivePort");
  for (let i = 0; i < 300; i++) {
    if (child.exitCode !== null) { throw new Error(`chromium exited with ${child.exitCode}`); }
    if (fs.existsSync(file)) {
      const first = fs.readFileSync(file, "utf8").split("\n")[0];
      if (first) { return Number(first); }
    }
    await sleep(100);
  }
  throw new Error("chromium did not open its DevTools port within 30 s");
}

async function checkPage(client, page) {
  const { Page, Runtime } = client;
  const loaded = Page.loadEventFired();
  const hash = page.indexOf("#");  // a fragment (e.g. index.html#search=nitro) is kept
  const file = hash === -1 ? page : page.slice(0, hash);
  const fragment = hash === -1 ? "" : page.slice(hash);
  await Page.navigate({ url: pathToFileURL(path.resolve(file)).href + fragment });
  await loaded;
  // open every <details> so that the figures' data tables are checked too
  await Runtime.evaluate({ expression: 'document.querySelectorAll("details").forEach(d => { d.open = true; })' });
  await Runtime.evaluate({ expression: axe.source });
  const run = await Runtime.evaluate({
    expression: `axe.run(document, {runOnly: {type: "tag", values: ${JSON.stringify(TAGS)}},
      resultTypes: ["violations"]}).then(r => JSON.stringify(r.violations.map(v => ({
        id: v.id, impact: v.impact, help: v.help,
        nodes: v.nodes.map(n => ({target: n.target, html: n.html.slice(0, 300),
                                  summary: n.failureSummary}))}))))`,
    awaitPromise: true, returnByValue: true,
  });
  if (run.exceptionDetails) {
    throw new Error(`axe failed on ${page}: ${JSON.stringify(run.exceptionDetails).slice(0, 500)}`);
  }
  return { page, violations: JSON.parse(run.result.value) };
}

async function main() {
  const args = parseArgs(process.argv.slice(2));
  if (args.pages.length === 0) { throw new Error("no pages given"); }
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), "dossier-axe-"));
  const child = spawn(args.chromium, [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
    "--disable-component-update", "--disable-sync", "--no-first-run",
    "--allow-file-access-from-files", "--window-size=1280,900",
    `--user-data-dir=${profile}`, "--remote-debugging-port=0", "about:blank",
  ], { stdio: "ignore", detached: true }); // its own process group: killed as a whole below
  let client;
  try {
    const port = await devtoolsPort(profile, child);
    const target = (await CDP.List({ port })).find((t) => t.type === "page");
    client = await CDP({ port, target });
    await client.Page.enable();
    await client.Page.setBypassCSP({ enabled: true }); // let axe's script into our pages
    const pages = [];
    for (const page of args.pages) { pages.push(await checkPage(client, page)); }
    process.stdout.write(JSON.stringify({ axe: axe.version, pages }) + "\n");
  } finally {
    if (client) { await client.close(); }
    const exited = new Promise((r) => (child.exitCode !== null ? r() : child.once("exit", r)));
    // Chromium's helpers (zygote, network service, crash handler) outlive a SIGKILL of
    // the browser process alone and kept writing into the profile while it was removed
    // (ENOTEMPTY, exit 2: a flaky test); kill the whole group, then remove the profile.
    try { process.kill(-child.pid, "SIGKILL"); } catch (e) { child.kill("SIGKILL"); }
    await exited;
    try {
      fs.rmSync(profile, { recursive: true, force: true, maxRetries: 20, retryDelay: 100 });
    } catch (e) { // the check itself is done: say so, do not fail it
      process.stderr.write(`accessibility check: note: could not remove ${profile}: ${e.message}\n`);
    }
  }
}

main().catch((err) => { process.stderr.write(`accessibility check: ${err.message}\n`); process.exit(2); });
