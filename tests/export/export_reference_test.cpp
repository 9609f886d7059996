// Reference check against h5py + numpy (Debian python3-h5py, python3-numpy via /usr/bin/python3):
// a Python reader that follows docs/format.md (tests/support/plan_records.py) decodes every plan of a run straight from its HDF5
// plan files (in the order run-state.json lists them) and compares plans and observables with
// what `planmill export` wrote as CSV.
#include <gtest/gtest.h>

#include <cstdio>
#include <iostream>
#include <sstream>

#include "export_support.hpp"
#include "command_output.hpp"

namespace planmill {
namespace {

namespace fs = std::filesystem;

// argv: run_dir out_dir units_csv id_column [rung]. Prints "checked ROWS PLANS WIDE_COLUMNS", then
// the record kinds it decoded ("kinds 0 2 3"). With a rung R > 0 it reads the group of rung R of
// each chain (chain_<2^40 + 64 c + R>, run_state.hpp rung_record_index) and the files export
// names with the rung.
const char* const kPythonCheck = R"PY(
import csv, json, math, os, re, sys
import h5py
from plan_records import records  # tests/support/plan_records.py

run_dir, out_dir, units_csv, id_column = sys.argv[1:5]
rung = int(sys.argv[5]) if len(sys.argv) > 5 else 0
group_of = lambda c: c if rung == 0 else (1 << 40) + 64 * c + rung
suffix = "" if rung == 0 else "-rung-%d" % rung

kinds_seen = set()

def decode(f, chain):
    for step, kind, plan in records(f, "chain_%d" % group_of(chain)):
        kinds_seen.add(kind)
        yield step, plan

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
            table = f["chain_%d/observables" % group_of(i)]
            obs[i].extend(table[...][:n])
            names = [x.decode() if isinstance(x, bytes) else str(x) for x in table.attrs["names"]]

with open(units_csv, newline="") as fh:
    ids = [row[id_column] for row in csv.DictReader(fh)]

def fail(what):
    sys.exit("mismatch: " + what)

rows = 0
with open(os.path.join(out_dir, "observables%s.csv" % suffix), newline="") as fh:
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
    m = re.fullmatch(r"chain-(\d+)%s-record-(\d+)\.csv" % suffix, name)
    if not m:
        fail("unexpected file " + name)
    with open(os.path.join(plan_dir, name), newline="") as fh:
        table = list(csv.reader(fh))[1:]
    check_plan(int(m[1]), int(m[2]), [t[0] for t in table], [t[1] for t in table], name)
    checked += 1

wide_columns = 0
wide = os.path.join(out_dir, "plans-wide%s.csv" % suffix)
if os.path.exists(wide):
    with open(wide, newline="") as fh:
        table = list(csv.reader(fh))
    for j, column in enumerate(table[0][1:], start=1):
        m = re.fullmatch(r"c(\d+)_r(\d+)", column)
        check_plan(int(m[1]), int(m[2]), [t[0] for t in table[1:]], [t[j] for t in table[1:]],
                   "plans-wide.csv column " + column)
        wide_columns += 1
print("checked %d %d %d" % (rows, checked, wide_columns))
print("kinds " + " ".join(str(x) for x in sorted(kinds_seen)))
)PY";

// Runs the check; returns its output ("checked ...\nkinds ...\n") or the failure it printed.
std::string python_check(const test::TempDir& dir, const fs::path& run_dir, const fs::path& out_dir,
                         const fs::path& units_csv, std::uint64_t rung = 0) {
  const std::string script = dir.write("check.py", kPythonCheck);
  const std::string command = "PYTHONPATH=" PLANMILL_SOURCE_DIR "/tests/support /usr/bin/python3 " +
                              script + " " + run_dir.string() + " " +
                              out_dir.string() + " " + units_csv.string() + " unit " +
                              std::to_string(rung) + " 2>&1";
  return test::command_output(command);
}

std::string python_check(const test::ExportFixture& f, std::uint64_t rung = 0) {
  return python_check(f.dir, f.run_dir, f.out_dir, f.units_csv, rung);
}

std::string first_line(const std::string& text) { return text.substr(0, text.find('\n')); }

TEST(ExportH5py, EveryPlanAndObservableMatchesAnIndependentReader) {
  test::ExportFixture f({.chains = 3,
                         .ranks = 2,
                         .segments = 3,
                         .records_per_segment = 25,
                         .units = 60,
                         .districts = 5});
  ASSERT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() +
                             " --every 1 --plan-layout both"),
            0);
  // 3 chains x 75 records: every row, every plan file, every wide column.
  EXPECT_EQ(first_line(python_check(f)), "checked 225 225 225");
}

TEST(ExportH5py, TwoByteLabelsAndAChosenSubset) {
  test::ExportFixture f(test::kThreeHundredDistricts);
  ASSERT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() +
                             " --chains 1 --every 7 --plans 0:59,0:0 --plan-layout both"),
            0);
  EXPECT_EQ(first_line(python_check(f)),
            "checked 120 11 11");  // records 0,7,...,56 of chain 1, and two
}

// A hot rung of a run that recorded every rung: h5py reads that rung's own group in each file.
// The export of rung 0 beside it must not pass the rung-2 check, so the check tells them apart.
TEST(ExportH5py, AHotRungMatchesAnIndependentReaderOfItsGroup) {
  test::ExportFixture f(test::kThreeRecordedRungs);
  ASSERT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() +
                             " --rung 2 --every 4 --plan-layout both"),
            0);
  EXPECT_EQ(first_line(python_check(f, 2)), "checked 90 24 24");  // 3 x 30 rows, 8 plans each
  // Rung 2's files given to a check that reads rung 1's groups: a mismatch, not a pass.
  for (const auto& name : {"observables", "plans-wide"}) {
    fs::rename(f.out_dir / (std::string(name) + "-rung-2.csv"),
               f.out_dir / (std::string(name) + "-rung-1.csv"));
  }
  fs::remove_all(f.out_dir / "plans");
  EXPECT_NE(python_check(f, 1).find("mismatch"), std::string::npos);
}

// A real run of `planmill run` on a `planmill synth` state: 2 chains, records at steps
// 55, 60, ..., 400 (70 each).
TEST(ExportH5py, ARealRunMatchesAnIndependentReader) {
  test::TempDir dir;
  const test::RealRun run = test::write_real_run(dir.path());
  const fs::path out = dir.path() / "csv";
  ASSERT_EQ(test::run_export(run.run_dir.string() + " --out " + out.string() +
                             " --every 3 --plan-layout both"),
            0);
  const std::string result = python_check(dir, run.run_dir, out, run.units_csv);
  EXPECT_EQ(first_line(result), "checked 140 48 48") << result;
  std::cout << "record kinds decoded: " << result.substr(result.find('\n') + 1);
}

// The check itself must catch a wrong district or a wrong observable.
TEST(ExportH5py, TheCheckCatchesAChangedDistrictOrObservable) {
  test::ExportFixture f({.chains = 2, .ranks = 1, .segments = 1, .records_per_segment = 10});
  ASSERT_EQ(test::run_export(f.run_dir.string() + " --out " + f.out_dir.string() + " --plans 1:4"),
            0);
  ASSERT_EQ(first_line(python_check(f)), "checked 20 1 0");
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
