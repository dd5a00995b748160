// Prints a JSON summary of an Arrow IPC file read with apache-arrow (the
// JavaScript implementation): column names and types, row count, and the
// first rows' values. Used by the Go tests as an independent reader.
import { readFileSync } from "node:fs";
import { tableFromIPC } from "apache-arrow";

const path = process.argv[2];
const rows = Number(process.argv[3] ?? 3);
const table = tableFromIPC(readFileSync(path));
const fields = table.schema.fields.map((f) => ({
  name: f.name,
  type: String(f.type),
  unit: f.metadata.get("unit") ?? "",
}));
const head = [];
for (let i = 0; i < Math.min(rows, table.numRows); i++) {
  const row = {};
  for (const f of table.schema.fields) {
    let v = table.getChild(f.name).get(i);
    if (typeof v === "bigint") v = Number(v);
    if (typeof v === "number" && !Number.isFinite(v)) v = String(v);
    row[f.name] = v;
  }
  head.push(row);
}
console.log(JSON.stringify({ numRows: table.numRows, fields, head }));
