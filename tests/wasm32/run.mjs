// Run a MicroPython script on the 32-bit MicroPython WebAssembly port under Node.js.
// Test and bench tool only (never shipped): the one 32-bit MicroPython this host can run
// (4-byte words, 16-byte GC blocks, boxed double floats), for figures a 64-bit unix build
// doubles.
//
//   node tests/wasm32/run.mjs [--heapsize BYTES] [--copy HOSTDIR:DIR]... [--cwd DIR]
//                             SCRIPT.py [ARG...]
//   node tests/wasm32/run.mjs --help      (prints this text)
//
// --heapsize sets the first heap area only: this port adds heap areas on demand, so it is no
// limit (measure memory with gc.mem_alloc() deltas, not by a heap too small to finish).
// --copy copies the host folder HOSTDIR (recursively, without __pycache__) into the runtime's in-memory file
// system at DIR; sys.path is ['', '.frozen', '/lib'], so "--copy build:/lib" makes the
// packages in build/ importable. sys.argv is [SCRIPT, ARG...]. Exit status: 0 when the
// script ran to its end or raised SystemExit(0 or None); SystemExit(n) gives n; any other
// uncaught exception prints its traceback on stderr and gives 1. SystemExit("message")
// prints the message on stderr and gives 1, as CPython does.
//
// The script is run in parts, cut at every line that reads exactly "#: next call" (a comment
// elsewhere), one runPython call per part in the same interpreter. gc.collect() here frees
// only what the calls before the current one left: the collector scans the current call's
// whole C stack conservatively, so garbage made in the same call is kept alive. A script
// that measures retained heap collects at the start of a part. Line numbers in a traceback
// count from the start of the part, not of the file.
import fs from "node:fs";
import path from "node:path";
import url from "node:url";

const here = path.dirname(url.fileURLToPath(import.meta.url));
await import(path.join(here, "node_modules/@micropython/micropython-webassembly-pyscript/micropython.mjs"));

const argv = process.argv.slice(2);
let heapsize = 2 * 1024 * 1024;
const copies = [];
let cwd = "/";
while (argv.length && (argv[0].startsWith("--") || argv[0] === "-h")) {
  if (argv[0] === "--help" || argv[0] === "-h") {
    // the usage: the comment at the head of this file
    const own = fs.readFileSync(url.fileURLToPath(import.meta.url), "utf8").split("\n");
    const head = [];
    for (const line of own) {
      if (!line.startsWith("//")) break;
      head.push(line.replace(/^\/\/ ?/, ""));
    }
    console.log(head.join("\n"));
    process.exit(0);
  }
  const opt = argv.shift();
  const val = argv.shift();
  if (val === undefined) { console.error("run.mjs: " + opt + " needs a value"); process.exit(2); }
  if (opt === "--heapsize") heapsize = parseInt(val, 10);
  else if (opt === "--copy") copies.push(val.split(":"));
  else if (opt === "--cwd") cwd = val;
  else { console.error("run.mjs: unknown option " + opt); process.exit(2); }
}
if (!argv.length) { console.error("run.mjs: no script given"); process.exit(2); }
const script = argv[0];

const mp = await globalThis.loadMicroPython({
  heapsize: heapsize,
  stdout: (d) => process.stdout.write(d),
  stderr: (d) => process.stderr.write(d),
  linebuffer: false,
});

function copyTree(src, dst) {
  mp.FS.mkdirTree(dst);
  for (const name of fs.readdirSync(src)) {
    if (name === "__pycache__" || name === "node_modules") continue;
    const s = path.join(src, name), d = dst + "/" + name;
    if (fs.statSync(s).isDirectory()) copyTree(s, d);
    else mp.FS.writeFile(d, fs.readFileSync(s));
  }
}
for (const [src, dst] of copies) copyTree(src, dst);
mp.FS.mkdirTree(cwd);
mp.FS.chdir(cwd);

const code = fs.readFileSync(script, "utf8");
mp.globals.set("_tg_argv", JSON.stringify(argv));
let status = 0;
try {
  mp.runPython("import sys, json\nsys.argv[:] = json.loads(_tg_argv)\ndel _tg_argv\n");
  for (const part of code.split(/^#: next call$/m)) mp.runPython(part);
} catch (error) {
  if (error.name !== "PythonError") throw error;
  if (error.type === "SystemExit") {
    // as CPython: no value or None -> 0, an int -> that int, False/True -> 0/1,
    // anything else (a message) -> printed on stderr, status 1
    const lines = error.message.trimEnd().split("\n");
    const last = lines[lines.length - 1];
    const value = last.startsWith("SystemExit:") ? last.slice("SystemExit:".length).trim() : "";
    if (value === "" || value === "None" || value === "False") status = 0;
    else if (value === "True") status = 1;
    else if (/^-?\d+$/.test(value)) status = parseInt(value, 10);
    else { process.stderr.write(value + "\n"); status = 1; }
  } else {
    process.stderr.write(error.message);
    status = 1;
  }
}
process.exitCode = status;
