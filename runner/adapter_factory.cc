#include "runner/adapter_factory.h"

#include "runner/subprocess_adapter.h"

namespace plumb {

std::unique_ptr<Adapter> CreateAdapter(const PipelineConfig& pipeline, int jobs,
                                       std::string* error) {
  switch (pipeline.kind) {
    case PipelineKind::kSubprocess:
      return SubprocessAdapter::Create(pipeline, jobs, error);
    case PipelineKind::kHttp:
      *error =
          "HTTP pipelines (url:) are not supported by this build yet; run the pipeline as a "
          "subprocess (command:) instead";
      return nullptr;
  }
  return nullptr;
}

}  // namespace plumb
