// Reference check against h5py + numpy (Debian python3-h5py, python3-numpy via /usr/bin/python3):
// a Python reader that follows docs/format.md decodes every plan of a run straight from its HDF5
// plan files (in the order run-state.json lists them) and compares plans and observables with
// what `planmill export` wrote as CSV.
#include <gtest/gtest.h>

#include <cstdio>
#include <sstream>

#include "export_support.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

// argv: run_dir out_dir units_csv id_column. Prints "checked ROWS PLANS WIDE_COLUMNS".
const char* const kPythonCheck = R"PY(
import csv, json, math, os, re, sys
import h5py
import numpy as np

run_dir, out_dir, units_csv, id_column = sys.argv[1:5]

def varint(b, i):
    v = s = 0
    while True:
        v |= (int(b[i]) & 0x7F) << s
        i += 1
        if not b[i - 1] & 0x80:
            return v, i
        s += 7

def decode(f, chain):
    w = 1 if int(f.attrs["district_count"]) <= 255 else 2
    g = f["chain_%d" % chain]
    data, plan = g["plan_bytes"][...], None
    lab = lambda b, i: int.from_bytes(bytes(b[i:i + w]), "little")
    for step, off, length, kind in g["plan_records"][...]:
        b = data[off:off + length]
        if kind == 0:
            plan = (b.view("<u2") if w == 2 else b).astype(np.int64)
        elif kind == 1:
            pass
        elif kind == 2:
            a, c = lab(b, 0), lab(b, w)
            members = np.flatnonzero((plan == a) | (plan == c))
            bits = np.unpackbits(b[2 * w:], bitorder="little")[:len(members)]
            plan[members] = np.where(bits == 1, c, a)
        elif kind == 3:
            i = u = 0
            guess = {}
            while i < len(b):
                gap, i = varint(b, i)
                coded, i = varint(b, i)
                u += gap
                old = int(plan[u])
                if coded % 2:
                    guess[old] = lab(b, i)
                    i += w
                plan[u:u + coded // 2] = guess[old]
                u += coded // 2
        else:
            sys.exit("record kind %d is not decoded by this reader" % kind)
        yield int(step), plan.copy()

state = json.load(open(os.path.join(run_dir, "run-state.json")))
plans, steps, obs, names = {}, {}, {}, None
for c in state["chains"]:
    i = c["index"]
    plans[i], steps[i], obs[i] = [], [], []
    for span in c["spans"]:
        with h5py.File(os.path.join(run_dir, span["file"]), "r") as f:
            n = span["records"]
            for step, plan in list(decode(f, i))[:n]:
                steps[i].append(step)
                plans[i].append(plan)
            table = f["chain_%d/observables" % i]
            obs[i].extend(table[...][:n])
            names = [x.decode() if isinstance(x, bytes) else str(x) for x in table.attrs["names"]]

with open(units_csv, newline="") as fh:
    ids = [row[id_column] for row in csv.DictReader(fh)]

def fail(what):
    sys.exit("mismatch: " + what)

rows = 0
with open(os.path.join(out_dir, "observables.csv"), newline="") as fh:
    reader = csv.reader(fh)
    header = next(reader)
    if header[:3] != ["chain", "record", "step"] or header[3:] != names:
        fail("observables header %r" % header)
    for row in reader:
        c, r = int(row[0]), int(row[1])
        if int(row[2]) != steps[c][r]:
            fail("step of %d:%d" % (c, r))
        for j, text in enumerate(row[3:]):
            want = float(obs[c][r][j])
            got = float("nan") if text == "NA" else float(text)
            if not (got == want or (math.isnan(got) and math.isnan(want))):
                fail("observable %s of %d:%d: %r vs %r" % (header[3 + j], c, r, text, want))
        rows += 1
if rows != sum(len(v) for v in steps.values()):
    fail("observables.csv has %d rows" % rows)

def check_plan(c, r, units, labels, where):
    if units != ids:
        fail("unit ids in " + where)
    if [int(x) for x in labels] != [int(x) + 1 for x in plans[c][r]]:
        fail("districts in " + where)

checked = 0
plan_dir = os.path.join(out_dir, "plans")
for name in sorted(os.listdir(plan_dir)) if os.path.isdir(plan_dir) else []:
    m = re.fullmatch(r"chain-(\d+)-record-(\d+)\.csv", name)
    if not m:
        fail("unexpected file " + name)
    with open(os.path.join(plan_dir, name), newline="") as fh:
        table = list(csv.reader(fh))[1:]
    check_plan(int(m[1]), int(m[2]), [t[0] for t in table], [t[1] for t in table], name)
    checked += 1

wide_columns = 0
wide = os.path.join(out_dir, "plans-wide.csv")
if os.path.exists(wide):
    with open(wide, newline="") as fh:
        table = list(csv.reader(fh))
    for j, column in enumerate(table[0][1:], start=1):
        m = re.fullmatch(r"c(\d+)_r(\d+)", column)
        check_plan(int(m[1]), int(m[2]), [t[0] for t in table[1:]], [t[j] for t in table[1:]],
                   "plans-wide.csv column " + column)
        wide_columns += 1
print("checked %d %d %d" % (rows, checked, wide_columns))
)PY";

// Runs the check; returns its one line of output ("checked ...") or the failure it printed.
std::string python_check(const test::ExportFixture& f) {
  const std::string script = f.dir.write("check.py", kPythonCheck);
  const std::string command = "/usr/bin/python3 " + script + " " + f.run_dir.string() + " " +
                              f.out_dir.string() + " " + f.units_csv.string() + " unit 2>&1";
  FILE* pipe = ::popen(command.c_str(), "r");
  std::string output;
  char buffer[512];
  while (pipe && std::fgets(buffer, sizeof buffer, pipe)) output += buffer;
  const int status = pipe ? ::pclose(pipe) : -1;
  return status == 0 ? output : "failed (" + std::to_string(status) + "): " + output;
}

TEST(ExportH5py, EveryPlanAndObservableMatchesAnIndependentReader) {
  test::ExportFixture f({.chains = 3, .ranks = 2, .segments = 3, .records_per_segment = 25,
                         .units = 60, .districts = 5});
  ASSERT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() +
                               " --every 1 --plan-layout both"), 0);
  // 3 chains x 75 records: every row, every plan file, every wide column.
  EXPECT_EQ(python_check(f), "checked 225 225 225\n");
}

TEST(ExportH5py, TwoByteLabelsAndAChosenSubset) {
  test::ExportFixture f({.chains = 2, .ranks = 1, .segments = 2, .records_per_segment = 30,
                         .units = 400, .districts = 300});
  ASSERT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() +
                               " --chains 1 --every 7 --plans 0:59,0:0 --plan-layout both"), 0);
  EXPECT_EQ(python_check(f), "checked 120 11 11\n");  // records 0,7,...,56 of chain 1, and two
}

// The check itself must catch a wrong district or a wrong observable.
TEST(ExportH5py, TheCheckCatchesAChangedDistrictOrObservable) {
  test::ExportFixture f({.chains = 2, .ranks = 1, .segments = 1, .records_per_segment = 10});
  ASSERT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() + " --plans 1:4"), 0);
  ASSERT_EQ(python_check(f), "checked 20 1 0\n");
  const std::string plan_file = (f.out_dir / "plans" / "chain-1-record-4.csv").string();
  const std::string plan = test::read_file(plan_file);
  std::string changed = plan;
  const std::size_t last = changed.rfind(',') + 1;  // district of the last unit
  changed[last] = changed[last] == '1' ? '2' : '1';
  f.dir.write("out/plans/chain-1-record-4.csv", changed);
  EXPECT_NE(python_check(f).find("mismatch: districts in chain-1-record-4.csv"), std::string::npos);
  f.dir.write("out/plans/chain-1-record-4.csv", plan);
  std::string table = test::read_file((f.out_dir / "observables.csv").string());
  const std::size_t last_row = table.rfind('\n', table.size() - 2) + 1;
  const std::size_t value = table.find(',', table.find(',', table.find(',', last_row) + 1) + 1) + 1;
  table.insert(value, "1");  // population_deviation of the last record, now 1x instead of x
  f.dir.write("out/observables.csv", table);
  EXPECT_NE(python_check(f).find("mismatch: observable population_deviation of 1:9"),
            std::string::npos);
}

}  // namespace
}  // namespace planmill
