#include "runner/pipeline/adapter_factory.h"

#include "runner/pipeline/http_adapter.h"
#include "runner/pipeline/subprocess_adapter.h"

namespace plumb {

std::unique_ptr<Adapter> CreateAdapter(const PipelineConfig& pipeline, int jobs,
                                       std::string* error) {
  switch (pipeline.kind) {
    case PipelineKind::kSubprocess:
      return SubprocessAdapter::Create(pipeline, jobs, error);
    case PipelineKind::kHttp:
      return HttpAdapter::Create(pipeline, jobs, error);
  }
  return nullptr;
}

}  // namespace plumb
