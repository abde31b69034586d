#include "runner/cli/grader_session.h"

#include <algorithm>
#include <cstdio>
#include <filesystem>

#include "runner/pipeline/adapter_factory.h"
#include "runner/run/calibration.h"
#include "runner/run/grader_identity.h"

namespace plumb {

void GraderSession::Shutdown() {
  for (const std::unique_ptr<Adapter>& adapter : adapters) adapter->Shutdown();
}

std::string DefaultGradeCachePath(const std::string& suite_path) {
  const std::filesystem::path dir = std::filesystem::path(suite_path).parent_path();
  return (dir / ".plumb" / "grades.sqlite").lexically_normal().generic_string();
}

bool StartGraders(const PreparedSuite& prepared, const std::vector<std::string>& names,
                  const GradeCacheOptions& cache, const std::string& tested_name,
                  const nlohmann::json& tested_config, GraderSession* session, std::string* error) {
  const Suite& suite = prepared.suite;
  for (const std::string& name : names) {
    const bool known = std::any_of(suite.graders.begin(), suite.graders.end(),
                                   [&](const GraderConfig& g) { return g.name == name; });
    if (!known) {
      std::string list;
      for (const GraderConfig& g : suite.graders) list += (list.empty() ? "" : ", ") + g.name;
      *error = "--grader " + name + ": no such grader in " + suite.path +
               " (it has: " + (list.empty() ? std::string("none; add a graders: block") : list) +
               ")";
      return false;
    }
  }
  std::vector<const GraderConfig*> chosen;
  for (const GraderConfig& g : suite.graders) {
    if (names.empty() || std::find(names.begin(), names.end(), g.name) != names.end()) {
      chosen.push_back(&g);
    }
  }
  for (const GraderConfig* grader : chosen) {
    const PipelineConfig* pipeline = nullptr;
    for (const PipelineConfig& p : suite.pipelines) {
      if (p.name == grader->pipeline) pipeline = &p;
    }
    if (pipeline == nullptr) {
      *error = "grader '" + grader->name + "' names pipeline '" + grader->pipeline +
               "', which the suite does not define";
      return false;
    }
    if (!grader->same_as_pipeline && IsSamePipeline(*pipeline, tested_name, tested_config)) {
      *error = "grader '" + grader->name + "' would grade pipeline '" + tested_name +
               "' with that pipeline itself (pipeline '" + pipeline->name +
               "' has its command or URL): a model grading its own answers is a known bias. "
               "Point the grader at another pipeline, or write `same_as_pipeline: allowed` "
               "under graders." +
               grader->name + " to accept it";
      return false;
    }
    const int jobs = pipeline->jobs > 0 ? pipeline->jobs : 1;
    std::unique_ptr<Adapter> adapter = CreateAdapter(*pipeline, jobs, error);
    if (adapter == nullptr) {
      *error = "grader '" + grader->name + "': " + *error;
      return false;
    }
    GraderRuntime runtime;
    if (pipeline->reply.given) {
      std::unique_ptr<ReplyMapping> reply = ReplyMapping::Create(pipeline->reply, error);
      if (reply == nullptr) {
        *error = "grader '" + grader->name + "': pipeline '" + pipeline->name + "': " + *error;
        return false;
      }
      runtime.reply = reply.get();
      session->replies.push_back(std::move(reply));
    }
    runtime.config = grader;
    runtime.pipeline = pipeline;
    runtime.adapter = adapter.get();
    runtime.identity = GraderIdentity(*grader, *pipeline);
    runtime.calibration =
        CalibrationSummary(AssessCalibration(suite.path, *grader, runtime.identity), *grader);
    session->inputs.graders.push_back(runtime);
    session->adapters.push_back(std::move(adapter));
  }
  if (!cache.disabled && !chosen.empty()) {
    const std::string path = cache.path.empty() ? DefaultGradeCachePath(suite.path) : cache.path;
    session->cache = VerdictCache::Open(path, error);
    if (session->cache == nullptr) return false;
  }
  session->inputs.suite = &suite;
  session->inputs.scorer = prepared.scorer.get();
  session->inputs.corpus = prepared.corpus.get();
  session->inputs.cache = session->cache.get();
  return true;
}

std::string GradingSummaryLine(const GradingCounts& counts) {
  std::string line = "graded: " + std::to_string(counts.from_cache + counts.requested) +
                     " grader calls, " + std::to_string(counts.from_cache) + " from the cache, " +
                     std::to_string(counts.requested) + " requested";
  for (const auto& [name, failed] : counts.failed) {
    if (failed == 0) continue;
    line += "; grade." + name + " failed on " + std::to_string(failed) + " answer" +
            (failed == 1 ? "" : "s") + " (left undefined; reasons in cases.jsonl)";
  }
  return line;
}

}  // namespace plumb

namespace plumb {

bool RefuseUncalibratedGates(const Suite& suite, const std::vector<std::string>& extra_gates) {
  if (suite.graders.empty()) return true;
  const std::vector<std::string> problems =
      UncalibratedGates(suite, AssessSuiteCalibrations(suite), extra_gates);
  for (const std::string& problem : problems) {
    std::fprintf(stderr, "%s: error: %s\n", suite.path.c_str(), problem.c_str());
  }
  return problems.empty();
}

}  // namespace plumb
