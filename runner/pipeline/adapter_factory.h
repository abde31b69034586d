#ifndef PLUMB_RUNNER_PIPELINE_ADAPTER_FACTORY_H_
#define PLUMB_RUNNER_PIPELINE_ADAPTER_FACTORY_H_

/// Picks and builds the adapter a pipeline config asks for (SPEC §5).

#include <memory>
#include <string>

#include "runner/pipeline/adapter.h"
#include "runner/suite/suite.h"

namespace plumb {

/// An adapter with `jobs` slots, or null with a sentence in *error (e.g. the command is not
/// found). Nothing is started yet: processes and connections open on first use.
std::unique_ptr<Adapter> CreateAdapter(const PipelineConfig& pipeline, int jobs,
                                       std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_ADAPTER_FACTORY_H_
