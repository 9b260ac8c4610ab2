// ModelSource and ColumnOptions on a real CLI11 parse.
#include <cstdio>
#include <filesystem>
#include <string>
#include <vector>

#include <doctest/doctest.h>

#include "app/column_options.h"
#include "app/controller_option.h"
#include "app/model_source.h"
#include "lti/error.h"
#include "lti/plant_formula.h"

namespace lw::app {
namespace {

// Parses args (without the program name) into a fresh app configured by `add`.
template <typename Add>
void Parse(std::vector<std::string> args, Add add) {
  CLI::App app;
  add(app);
  std::reverse(args.begin(), args.end());
  app.parse(args);
}

TEST_CASE("ModelSource reads --plant") {
  ModelSource source;
  Parse({"--plant", "3*exp(-0.5*s)/(2*s+1)"}, [&](CLI::App& a) { source.Add(a); });
  LoadedModel m = source.Load();
  CHECK(!m.model.has_value());
  CHECK(m.tf.delay() == 0.5);
  CHECK(m.tf.dc_gain() == doctest::Approx(3.0));
  CHECK(m.description == "plant formula '3*exp(-0.5*s)/(2*s+1)'");
}

TEST_CASE("ModelSource needs exactly one of a model file and a formula") {
  ModelSource none;
  Parse({}, [&](CLI::App& a) { none.Add(a); });
  CHECK_THROWS_AS(none.Load(), UsageError);

  ModelSource both;
  CHECK_THROWS_AS(Parse({"m.json", "--plant", "1/(s+1)"}, [&](CLI::App& a) { both.Add(a); }),
                  CLI::ExcludesError);
  ModelSource both_spellings;
  CHECK_THROWS_AS(
      Parse({"a.json", "--model", "b.json"},
            [&](CLI::App& a) { both_spellings.Add(a, ModelSource::FileSpelling::kBoth); }),
      CLI::ExcludesError);
}

TEST_CASE("ModelSource passes a bad formula's column on") {
  ModelSource source;
  Parse({"--plant", "1/(s+1"}, [&](CLI::App& a) { source.Add(a); });
  try {
    source.Load();
    FAIL("no error for an unclosed parenthesis");
  } catch (const FormulaError& e) {
    CHECK(e.column() >= 1);
    CHECK(std::string(e.what()).find("column") != std::string::npos);
  }
}

TEST_CASE("ModelSource reads a model file by either spelling") {
  namespace fs = std::filesystem;
  fs::path dir = fs::temp_directory_path() / "lw_app_model_source_test";
  fs::create_directories(dir);
  std::string path = (dir / "zone.json").string();
  ModelDocument doc;
  doc.structure = "fopdt";
  doc.tf = TransferFunction({1.5}, {20.0, 1.0}, 2.0);
  doc.provenance.tool = "loopwright test";
  WriteModelFile(path, doc);

  ModelSource positional;
  Parse({path}, [&](CLI::App& a) { positional.Add(a); });
  LoadedModel m = positional.Load();
  REQUIRE(m.model.has_value());
  CHECK(m.model->structure == "fopdt");
  CHECK(m.tf.delay() == 2.0);
  CHECK(m.description == "model file '" + path + "' (fopdt)");

  ModelSource option;
  Parse({"--model", path}, [&](CLI::App& a) { option.Add(a, ModelSource::FileSpelling::kOption); });
  CHECK(option.Load().tf.dc_gain() == doctest::Approx(1.5));

  ModelSource missing;
  Parse({(dir / "absent.json").string()}, [&](CLI::App& a) { missing.Add(a); });
  CHECK_THROWS_AS(missing.Load(), DataError);
  fs::remove_all(dir);
}

TEST_CASE("ColumnOptions binds the io column names") {
  ColumnOptions columns;
  Parse({"--time", "time_ms", "--time-unit", "ms", "--output", "3"},
        [&](CLI::App& a) { columns.Add(a, {.input = true, .output = true, .reference = true}); });
  CHECK(columns.names().time == "time_ms");
  CHECK(columns.names().time_unit == "ms");
  CHECK(columns.names().output == "3");
  CHECK(columns.names().input == "u");
  CHECK(columns.names().reference == "r");

  ColumnOptions bad_unit;
  CHECK_THROWS_AS(Parse({"--time-unit", "min"}, [&](CLI::App& a) { bad_unit.Add(a); }),
                  CLI::ValidationError);
  ColumnOptions no_reference;
  CHECK_THROWS_AS(Parse({"--reference", "r"}, [&](CLI::App& a) { no_reference.Add(a); }),
                  CLI::ExtrasError);
}

TEST_CASE("ControllerOption parses the controller and checks the gain") {
  ControllerOption c;
  Parse({"--controller", "pi:0.5", "--gain", "2"}, [&](CLI::App& a) { c.Add(a, true); });
  CHECK(c.Parse().kind() == Controller::Kind::kPI);
  CHECK(c.gain() == 2.0);

  ControllerOption negative;
  Parse({"--gain", "-1"}, [&](CLI::App& a) { negative.Add(a, false); });
  CHECK_THROWS_AS(negative.gain(), UsageError);
  ControllerOption absent;
  Parse({}, [&](CLI::App& a) { absent.Add(a, false); });
  CHECK(!absent.has_gain());
  CHECK(absent.Parse().kind() == Controller::Kind::kProportional);
  ControllerOption required;
  CHECK_THROWS_AS(Parse({}, [&](CLI::App& a) { required.Add(a, true); }), CLI::RequiredError);
}

}  // namespace
}  // namespace lw::app
