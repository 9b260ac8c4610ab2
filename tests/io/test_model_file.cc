#include "io/model_file.h"

#include <doctest/doctest.h>

#include <cmath>
#include <cstring>
#include <limits>
#include <string>

#include "lti/error.h"
#include "tests/io/temp_dir.h"

namespace {

using nlohmann::json;

lw::ModelDocument Sample() {
  lw::ModelDocument m;
  m.structure = "second order + dead time";
  // Coefficients with long binary expansions, to catch any rounding in the round trip.
  m.tf = lw::TransferFunction({2.0 / 3.0, 0.1}, {1.0, 0.7 / 3.0, 1.0 / 7.0}, 0.3 + 1e-16 * 3);
  m.parameters = {{"K", 0.1 / 0.7, 0.1, 0.2, ""},
                  {"T", 1.0 / 3.0, std::nan(""), std::numeric_limits<double>::infinity(), "s"},
                  {"L", 0.3, -0.0, 4.9406564584124654e-324, "s"}};
  m.covariance.resize(3, 3);
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 3; ++j) m.covariance(i, j) = 1.0 / (1.0 + i + j) * (i == j ? 1 : -0.3);
  m.provenance = {"rig4/step.csv",
                  "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad",
                  "2026-12-01T22:40:00Z", "loopwright 0.1.0", "loopwright fit rig4/step.csv"};
  m.details = {{"rms_residual", 0.012345678901234567}, {"iterations", 17}, {"note", "ok"}};
  return m;
}

bool SameBits(double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; }

void CheckSame(const lw::ModelDocument& a, const lw::ModelDocument& b) {
  CHECK(a.structure == b.structure);
  CHECK(a.tf.num() == b.tf.num());
  CHECK(a.tf.den() == b.tf.den());
  CHECK(SameBits(a.tf.delay(), b.tf.delay()));
  REQUIRE(a.parameters.size() == b.parameters.size());
  for (size_t i = 0; i < a.parameters.size(); ++i) {
    CHECK(a.parameters[i].name == b.parameters[i].name);
    CHECK(a.parameters[i].unit == b.parameters[i].unit);
    CHECK(SameBits(a.parameters[i].value, b.parameters[i].value));
    CHECK((SameBits(a.parameters[i].ci_low, b.parameters[i].ci_low) ||
           (std::isnan(a.parameters[i].ci_low) && std::isnan(b.parameters[i].ci_low))));
    CHECK(SameBits(a.parameters[i].ci_high, b.parameters[i].ci_high));
  }
  REQUIRE(a.covariance.rows() == b.covariance.rows());
  REQUIRE(a.covariance.cols() == b.covariance.cols());
  for (Eigen::Index i = 0; i < a.covariance.size(); ++i)
    CHECK(SameBits(a.covariance.data()[i], b.covariance.data()[i]));
  CHECK(a.provenance.source == b.provenance.source);
  CHECK(a.provenance.source_sha256 == b.provenance.source_sha256);
  CHECK(a.provenance.created == b.provenance.created);
  CHECK(a.provenance.tool == b.provenance.tool);
  CHECK(a.provenance.command_line == b.provenance.command_line);
  CHECK(a.details == b.details);
}

std::string ReadError(const json& doc) {
  try {
    lw::ModelFromJson(doc, "fit.json");
  } catch (const lw::DataError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("A model document has the documented layout") {
  const json doc = lw::ModelToJson(Sample());
  CHECK(doc["format"] == "loopwright-model");
  CHECK(doc["version"] == 1);
  CHECK(doc["tf"]["den"].size() == 3);
  CHECK(doc["tf"]["den"][0] == 1.0);
  CHECK(doc["parameters"][1]["ci95"][0].is_null());
  CHECK(doc["parameters"][1]["ci95"][1] == "inf");
  CHECK(doc["parameters"][1]["unit"] == "s");
  CHECK(doc["covariance"].size() == 3);
  CHECK(doc["provenance"]["created"] == "2026-12-01T22:40:00Z");
  CHECK(doc["details"]["iterations"] == 17);
}

TEST_CASE("Model files round-trip bit for bit through a file") {
  lw::test::TempDir dir;
  const std::string path = dir.File("fit.json");
  const lw::ModelDocument m = Sample();
  lw::WriteModelFile(path, m);
  CHECK(dir.Entries() == std::vector<std::string>{"fit.json"});
  CheckSame(m, lw::ReadModelFile(path));
  // Without covariance, parameters or details.
  lw::ModelDocument bare;
  bare.structure = "gain";
  bare.tf = lw::TransferFunction({3.5}, {1.0});
  lw::WriteModelFile(path, bare);
  const lw::ModelDocument back = lw::ReadModelFile(path);
  CheckSame(bare, back);
  CHECK(back.covariance.size() == 0);
}

TEST_CASE("Bad documents name the file and the field") {
  const json good = lw::ModelToJson(Sample());
  CHECK(ReadError(good).empty());
  CHECK(ReadError(json::array()) == "fit.json: a model file must be a JSON object");
  json d = good;
  d["format"] = "something-else";
  CHECK(ReadError(d) ==
        "fit.json: not a loopwright model file (field 'format' must be \"loopwright-model\")");
  d = good;
  d["version"] = 2;
  CHECK(ReadError(d) == "fit.json: model file version 2 is newer than this loopwright reads (1)");
  d = good;
  d["tf"]["den"] = json::array();
  CHECK(ReadError(d) == "fit.json: field 'tf.den' must be a non-empty array of finite numbers");
  d = good;
  d["tf"]["num"] = json::array({1, "x"});
  CHECK(ReadError(d) == "fit.json: field 'tf.num' must be a non-empty array of finite numbers");
  d = good;
  d["tf"]["den"] = json::array({0, 0});
  CHECK(ReadError(d) == "fit.json: field 'tf.den' must not be the zero polynomial");
  d = good;
  d["tf"]["delay"] = -0.5;
  CHECK(ReadError(d) == "fit.json: field 'tf.delay' must not be negative");
  d = good;
  d["tf"].erase("delay");
  CHECK(ReadError(d) == "fit.json: field 'tf.delay' is missing");
  d = good;
  d["parameters"][1].erase("name");
  CHECK(ReadError(d) == "fit.json: field 'parameters[1].name' is missing");
  d = good;
  d["parameters"][0]["ci95"] = json::array({1});
  CHECK(ReadError(d) == "fit.json: field 'parameters[0].ci95' must be an array [low, high]");
  d = good;
  d["covariance"] = json::array({json::array({1, 2})});
  CHECK(ReadError(d) ==
        "fit.json: field 'covariance' must be null or a 3 x 3 array of arrays (one per "
        "parameter)");
  d = good;
  d["provenance"]["created"] = 5;
  CHECK(ReadError(d) == "fit.json: field 'provenance.created' must be a string");
}

TEST_CASE("Unreadable and non-JSON files are data errors; writing checks the covariance") {
  lw::test::TempDir dir;
  const std::string path = dir.File("broken.json");
  lw::test::WriteText(path, "{\"format\": \"loopwright-model\", ");
  try {
    lw::ReadModelFile(path);
    FAIL("expected DataError");
  } catch (const lw::DataError& e) {
    CHECK(std::string(e.what()).rfind(path + ": not valid JSON (", 0) == 0);
  }
  CHECK_THROWS_AS(lw::ReadModelFile(dir.File("none.json")), lw::DataError);
  lw::ModelDocument m = Sample();
  m.covariance.resize(2, 2);
  CHECK_THROWS_AS(lw::WriteModelFile(dir.File("x.json"), m), lw::UsageError);
  CHECK(dir.Entries() == std::vector<std::string>{"broken.json"});
}

TEST_CASE("NowUtcIso8601 has the documented shape") {
  const std::string now = lw::NowUtcIso8601();
  REQUIRE(now.size() == 20);
  CHECK(now[4] == '-');
  CHECK(now[10] == 'T');
  CHECK(now[19] == 'Z');
}
