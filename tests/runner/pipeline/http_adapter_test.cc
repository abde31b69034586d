// The HTTP adapter (runner/pipeline/http_adapter.h) against real servers on 127.0.0.1: the
// fault-injecting fixtures/fault-server (which answers, refuses, stalls, resets or floods as a
// request's path asks and records when each request arrived) and the demo pipeline's --serve
// mode. The expected outcome of each fault is the case outcome SPEC §5 defines: a case error
// with its reason and a bounded excerpt, retried only for connect errors, 408, 429 and 5xx.
// Nothing here asserts a speed; waits are checked from below, from the server's own arrival
// times (a retry that honours "Retry-After: 1" cannot arrive sooner than a second later).

#include "runner/pipeline/http_adapter.h"

#include <arpa/inet.h>
#include <netinet/in.h>
#include <signal.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <cstdlib>
#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <thread>
#include <vector>

#include "runner/pipeline/reply_mapping.h"
#include "runner/pipeline/response.h"
#include "tests/support/plumb_process.h"

using nlohmann::json;

namespace {

// Request-block parts as the loader builds them from `!case FIELD` and literal values.
plumb::RequestPart Field(const std::string& field) {
  plumb::RequestPart part;
  part.kind = plumb::RequestPart::Kind::kCaseField;
  part.field = field;
  return part;
}

plumb::RequestPart Value(const json& value) {
  plumb::RequestPart part;
  part.value = value;
  return part;
}

plumb::RequestPart Object(const std::vector<std::pair<std::string, plumb::RequestPart>>& members) {
  plumb::RequestPart part;
  part.kind = plumb::RequestPart::Kind::kObject;
  for (const auto& [key, value] : members) {
    part.keys.push_back(key);
    part.items.push_back(value);
  }
  return part;
}

// A server program run for one test: started with its port line read, killed at the end.
class ServerProcess {
 public:
  // `port_on_stderr`: the demo pipeline announces its port on stderr, fault-server on stdout.
  ServerProcess(const std::string& program, const std::vector<std::string>& args,
                bool port_on_stderr) {
    int out[2];
    REQUIRE(pipe(out) == 0);
    pid_ = fork();
    REQUIRE(pid_ >= 0);
    if (pid_ == 0) {
      dup2(out[1], port_on_stderr ? 2 : 1);
      close(out[0]);
      close(out[1]);
      std::vector<char*> argv;
      argv.push_back(const_cast<char*>(program.c_str()));
      for (const std::string& arg : args) argv.push_back(const_cast<char*>(arg.c_str()));
      argv.push_back(nullptr);
      execv(program.c_str(), argv.data());
      _exit(127);
    }
    close(out[1]);
    const std::string marker = "listening on 127.0.0.1:";
    std::string text;
    char c;
    while (text.find(marker) == std::string::npos || text.back() != '\n') {
      REQUIRE(read(out[0], &c, 1) == 1);
      text.push_back(c);
    }
    port_ = std::stoi(text.substr(text.find(marker) + marker.size()));
    // Keep reading whatever else it prints, so a full pipe never blocks the server.
    const int fd = out[0];
    drain_ = std::thread([fd] {
      char buffer[4096];
      while (read(fd, buffer, sizeof buffer) > 0) {
      }
      close(fd);
    });
  }
  ~ServerProcess() {
    kill(pid_, SIGKILL);
    waitpid(pid_, nullptr, 0);
    drain_.join();
  }
  ServerProcess(const ServerProcess&) = delete;
  ServerProcess& operator=(const ServerProcess&) = delete;

  int port() const { return port_; }
  std::string Url(const std::string& path) const {
    return "http://127.0.0.1:" + std::to_string(port_) + path;
  }

 private:
  pid_t pid_ = -1;
  int port_ = 0;
  std::thread drain_;
};

std::unique_ptr<ServerProcess> StartFaultServer() {
  return std::make_unique<ServerProcess>(plumb_test::kFixtures + "fault-server",
                                         std::vector<std::string>{}, false);
}

// One GET over a plain socket with "Connection: close"; the reply body.
std::string Fetch(int port, const std::string& path) {
  const int fd = socket(AF_INET, SOCK_STREAM, 0);
  REQUIRE(fd >= 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_port = htons(static_cast<uint16_t>(port));
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  REQUIRE(connect(fd, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
  const std::string request = "GET " + path + " HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n";
  REQUIRE(send(fd, request.data(), request.size(), 0) == static_cast<ssize_t>(request.size()));
  std::string reply;
  char buffer[4096];
  ssize_t n;
  while ((n = recv(fd, buffer, sizeof buffer, 0)) > 0) reply.append(buffer, static_cast<size_t>(n));
  close(fd);
  return reply.substr(reply.find("\r\n\r\n") + 4);
}

json Stats(const ServerProcess& server) { return json::parse(Fetch(server.port(), "/stats")); }

// Arrival times (ms) of the requests with this mode and case id.
std::vector<long> Arrivals(const ServerProcess& server, const std::string& key) {
  const json stats = Stats(server);
  if (!stats["arrivals"].contains(key)) return {};
  return stats["arrivals"][key].get<std::vector<long>>();
}

plumb::PipelineConfig Config(const std::string& url) {
  plumb::PipelineConfig config;
  config.name = "service";
  config.kind = plumb::PipelineKind::kHttp;
  config.url = plumb::ExpandedString{url, url};
  config.timeout_ms = 5000;
  config.retries = 3;
  return config;
}

// Backoff short enough that retried tests take milliseconds, not seconds.
plumb::HttpAdapter::Options FastRetries() {
  plumb::HttpAdapter::Options options;
  options.retry.base = std::chrono::milliseconds(10);
  options.retry.cap = std::chrono::milliseconds(50);
  return options;
}

std::unique_ptr<plumb::HttpAdapter> MakeAdapter(
    const plumb::PipelineConfig& config, int slots = 1,
    plumb::HttpAdapter::Options options = FastRetries()) {
  std::string error;
  std::unique_ptr<plumb::HttpAdapter> adapter =
      plumb::HttpAdapter::Create(config, slots, options, &error);
  INFO(error);
  REQUIRE(adapter != nullptr);
  return adapter;
}

plumb::PipelineRequest Request(const std::string& id, const std::string& question,
                               json input = json::object()) {
  plumb::PipelineRequest r;
  r.id = id;
  r.question = question;
  r.input = std::move(input);
  return r;
}

}  // namespace

TEST_CASE("a 2xx reply comes back as the raw body after one attempt") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/echo")));
  const plumb::CallResult r = adapter->Call(Request("c1", "How long before departure?"), 0);
  CHECK(r.error.empty());
  CHECK(r.body == R"({"answer":"How long before departure?"})");
  CHECK(r.http_status == 200);
  CHECK(r.attempts == 1);
  CHECK(r.latency_ms > 0);
}

TEST_CASE("the request body is the rendered request block, JSON-escaped") {
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/echo-headers"));
  config.request = Object({{"q", Field("question")}, {"k", Value(4)}});
  auto adapter = MakeAdapter(config);
  const plumb::CallResult r = adapter->Call(Request("c1", "say \"hi\"\n"), 0);
  REQUIRE(r.error.empty());
  const std::string answer = json::parse(r.body)["answer"];
  // What the server read after the headers: the body exactly as RFC 8259 escapes it.
  CHECK(answer.substr(answer.rfind(" | ") + 3) == R"({"k":4,"q":"say \"hi\"\n"})");
  CHECK(answer.find("Content-Type: application/json") != std::string::npos);
}

TEST_CASE("GET sends the request block as query parameters, percent-encoded") {
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/echo"));
  config.method = "GET";
  config.request = Object({{"q", Field("question")}});
  auto adapter = MakeAdapter(config);
  const plumb::CallResult r = adapter->Call(Request("c1", "ferry times & fares"), 0);
  REQUIRE(r.error.empty());
  // The fault server does not decode the query, so the answer shows the bytes on the wire.
  CHECK(json::parse(r.body)["answer"] == "ferry%20times%20%26%20fares");
}

TEST_CASE("429 with Retry-After in seconds is retried after at least that long") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/retry-after?after=1")));
  const plumb::CallResult r = adapter->Call(Request("c429", "q"), 0);
  CHECK(r.error.empty());
  CHECK(r.attempts == 2);
  CHECK(r.http_status == 200);
  const std::vector<long> arrivals = Arrivals(*server, "retry-after:c429");
  REQUIRE(arrivals.size() == 2);
  // The server stamps whole milliseconds, so a wait of exactly 1000 ms may read as 999.
  CHECK(arrivals[1] - arrivals[0] >= 999);
}

TEST_CASE("429 with Retry-After as an HTTP-date is honoured too") {
  auto server = StartFaultServer();
  // The date is 2 s ahead of the server's clock, truncated to the second: 1 to 2 s from now.
  auto adapter = MakeAdapter(Config(server->Url("/retry-after?after=2&date=1")));
  const plumb::CallResult r = adapter->Call(Request("cdate", "q"), 0);
  CHECK(r.error.empty());
  CHECK(r.attempts == 2);
  const std::vector<long> arrivals = Arrivals(*server, "retry-after:cdate");
  REQUIRE(arrivals.size() == 2);
  CHECK(arrivals[1] - arrivals[0] >= 990);
}

TEST_CASE("503 is retried with backoff until the service answers") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/unavailable?times=2")));
  const plumb::CallResult r = adapter->Call(Request("c503", "back again"), 0);
  CHECK(r.error.empty());
  CHECK(r.attempts == 3);
  CHECK(r.body == R"({"answer":"back again"})");
}

TEST_CASE("a 503 that persists past the retries is a case error with the reply's excerpt") {
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/status?code=503"));
  config.retries = 2;
  auto adapter = MakeAdapter(config);
  const plumb::CallResult r = adapter->Call(Request("c", "q"), 0);
  CHECK(r.error == "HTTP 503 Service Unavailable (after 3 attempts)");
  CHECK(r.attempts == 3);
  CHECK(r.http_status == 503);
  CHECK(r.stdout_excerpt.find("fault-server status") != std::string::npos);
  CHECK(Arrivals(*server, "status:c").size() == 3);
}

TEST_CASE("400 is never retried") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/status?code=400")));
  const plumb::CallResult r = adapter->Call(Request("c400", "q"), 0);
  CHECK(r.error == "HTTP 400 Bad Request");
  CHECK(r.attempts == 1);
  CHECK(r.http_status == 400);
  CHECK(Arrivals(*server, "status:c400").size() == 1);
}

TEST_CASE("a server that never answers costs the timeout once") {
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/hang"));
  config.timeout_ms = 300;
  auto adapter = MakeAdapter(config);
  const plumb::CallResult r = adapter->Call(Request("c", "q"), 0);
  CHECK(r.error == "timed out after 300ms");
  CHECK(r.attempts == 1);
  CHECK(r.http_status == 0);
  // The latency is the timeout, marked as a lower bound (the reply would have taken longer).
  CHECK(r.timed_out);
  CHECK(r.latency_ms == 300);
  CHECK(Arrivals(*server, "hang:c").size() == 1);
}

TEST_CASE("a ready_url is polled until it answers 2xx before the first request") {
  // fault-server's /ready answers 503 until 2000 ms after it started, then 200. Its arrival
  // times (ms since the server started) show every poll before the 200 and the case's request
  // after it; the warm-up is recorded once, for the service.
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/echo"));
  const std::string ready = server->Url("/ready?after=2000");
  config.ready_url = plumb::ExpandedString{ready, ready};
  auto adapter = MakeAdapter(config);
  const plumb::CallResult r = adapter->Call(Request("c1", "q"), 0);
  CHECK(r.error.empty());
  const std::vector<long> polls = Arrivals(*server, "ready:");
  const std::vector<long> asked = Arrivals(*server, "echo:c1");
  REQUIRE(!polls.empty());
  REQUIRE(asked.size() == 1);
  CHECK(polls.back() >= 2000);
  CHECK(asked[0] >= polls.back());
  const std::vector<plumb::WorkerWarmup> warmups = adapter->Warmups();
  REQUIRE(warmups.size() == 1);
  CHECK(warmups[0].signal == "ready_url");
  CHECK(warmups[0].ms > 0);
  // Ready once is ready: the next call polls no more.
  CHECK(adapter->Call(Request("c2", "q"), 0).error.empty());
  CHECK(Arrivals(*server, "ready:").size() == polls.size());
}

TEST_CASE("a ready_url that never answers 2xx fails every call with the reason") {
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/echo"));
  const std::string ready = server->Url("/status?code=503");
  config.ready_url = plumb::ExpandedString{ready, ready};
  config.startup_timeout_ms = 300;
  auto adapter = MakeAdapter(config);
  const std::string reason =
      "the ready_url did not answer 2xx within the startup_timeout of 300ms (last: HTTP 503); "
      "check the service, or raise startup_timeout";
  CHECK(adapter->Call(Request("c1", "q"), 0).error == reason);
  const size_t polls = Arrivals(*server, "status:").size();
  CHECK(adapter->Call(Request("c2", "q"), 0).error == reason);
  CHECK(Arrivals(*server, "status:").size() == polls);  // no second wait
  CHECK(Arrivals(*server, "echo:c1").empty());
  CHECK(adapter->Warmups().empty());
}

TEST_CASE("a reset connection is a case error") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/reset")));
  const plumb::CallResult r = adapter->Call(Request("c", "q"), 0);
  CHECK(r.error == "connection reset");
  CHECK(r.attempts == 1);
}

TEST_CASE("a chunked reply is reassembled") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/chunked")));
  const plumb::CallResult r = adapter->Call(Request("c", "a reply in three chunks"), 0);
  CHECK(r.error.empty());
  CHECK(r.body == R"({"answer":"a reply in three chunks"})");
}

TEST_CASE("a reply over the size cap is cut off, with or without Content-Length") {
  auto server = StartFaultServer();
  const std::string path =
      GENERATE(std::string("/big?bytes=100000"), std::string("/big?bytes=100000&chunked=1"));
  INFO(path);
  plumb::PipelineConfig config = Config(server->Url(path));
  config.max_response_bytes = 64 * 1024;
  auto adapter = MakeAdapter(config);
  const plumb::CallResult r = adapter->Call(Request("c", "q"), 0);
  CHECK(r.error == "response exceeded 64 KiB");
  CHECK(r.attempts == 1);
  CHECK(r.body.empty());
  CHECK(r.stdout_excerpt.size() <= plumb::HttpAdapter::kExcerptBytes);
}

TEST_CASE("invalid JSON and an unresolved answer pointer pass the adapter and fail the parse") {
  auto server = StartFaultServer();
  auto invalid = MakeAdapter(Config(server->Url("/invalid-json")));
  const plumb::CallResult r = invalid->Call(Request("c", "q"), 0);
  REQUIRE(r.error.empty());  // a 200 reply: whether it is valid is the parser's decision
  plumb::Response response;
  std::string error;
  CHECK_FALSE(plumb::ParseResponse(r.body, plumb::ProtocolReplyMapping(), &response, &error));
  CHECK(error == "response is not valid JSON");

  plumb::ReplyFields fields;
  fields.answer = "/data/text";
  std::string create_error;
  const std::unique_ptr<plumb::ReplyMapping> mapping =
      plumb::ReplyMapping::Create(fields, &create_error);
  REQUIRE(mapping != nullptr);
  const plumb::ReplyMapping& map = *mapping;
  auto echo = MakeAdapter(Config(server->Url("/echo")));
  const plumb::CallResult plain = echo->Call(Request("c", "q"), 0);
  CHECK_FALSE(plumb::ParseResponse(plain.body, map, &response, &error));
  CHECK(error == "response has no answer at '/data/text'");
  auto nested = MakeAdapter(Config(server->Url("/map")));
  const plumb::CallResult mapped = nested->Call(Request("c", "found it"), 0);
  REQUIRE(plumb::ParseResponse(mapped.body, map, &response, &error));
  CHECK(response.answer == "found it");
}

TEST_CASE("a refused connection is retried, then reported") {
  // A port that was just free: bind, read it, close.
  const int fd = socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  REQUIRE(bind(fd, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
  socklen_t length = sizeof address;
  getsockname(fd, reinterpret_cast<sockaddr*>(&address), &length);
  close(fd);
  plumb::PipelineConfig config =
      Config("http://127.0.0.1:" + std::to_string(ntohs(address.sin_port)) + "/answer");
  config.retries = 2;
  auto adapter = MakeAdapter(config);
  const plumb::CallResult r = adapter->Call(Request("c", "q"), 0);
  CHECK(r.error.rfind("could not connect: ", 0) == 0);
  CHECK(r.error.find("(after 3 attempts)") != std::string::npos);
  CHECK(r.attempts == 3);
}

TEST_CASE("a TLS handshake with a server that speaks plain HTTP fails once, without retries") {
  // A listener that answers whatever arrives (here a TLS ClientHello) with a plain HTTP reply.
  const int listener = socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  REQUIRE(bind(listener, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
  REQUIRE(listen(listener, 4) == 0);
  socklen_t length = sizeof address;
  getsockname(listener, reinterpret_cast<sockaddr*>(&address), &length);
  std::thread plain([listener] {
    const int fd = accept(listener, nullptr, nullptr);
    char buffer[4096];
    if (recv(fd, buffer, sizeof buffer, 0) > 0) {
      const std::string reply = "HTTP/1.1 400 Bad Request\r\nContent-Length: 0\r\n\r\n";
      send(fd, reply.data(), reply.size(), MSG_NOSIGNAL);
    }
    close(fd);
  });
  auto adapter = MakeAdapter(
      Config("https://127.0.0.1:" + std::to_string(ntohs(address.sin_port)) + "/answer"));
  const plumb::CallResult r = adapter->Call(Request("c", "q"), 0);
  plain.join();
  close(listener);
  CHECK(r.error.rfind("TLS error: ", 0) == 0);
  CHECK(r.attempts == 1);
}

TEST_CASE("one slot reuses one kept-alive connection") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/echo")));
  for (int i = 0; i < 10; ++i) REQUIRE(adapter->Call(Request("c", "q"), 0).error.empty());
  // The stats request itself is the second connection.
  CHECK(Stats(*server)["connections"] == 2);
  CHECK(Stats(*server)["requests"] == 12);
}

TEST_CASE("concurrent slots never open more connections than there are slots") {
  auto server = StartFaultServer();
  constexpr int kSlots = 4;
  auto adapter = MakeAdapter(Config(server->Url("/delay?ms=20")), kSlots);
  std::vector<std::thread> threads;
  std::vector<int> failures(kSlots, 0);
  for (int slot = 0; slot < kSlots; ++slot) {
    threads.emplace_back([&, slot] {
      for (int i = 0; i < 5; ++i) {
        if (!adapter->Call(Request("c" + std::to_string(slot), "q"), slot).error.empty()) {
          ++failures[slot];
        }
      }
    });
  }
  for (std::thread& t : threads) t.join();
  CHECK(failures == std::vector<int>(kSlots, 0));
  const json stats = Stats(*server);
  CHECK(stats["requests"] == 21);
  CHECK(stats["connections"].get<int>() <= kSlots + 1);
}

TEST_CASE("rate: 20/s spaces requests 50 ms apart, even from one fast slot") {
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/echo"));
  config.rate_per_second = 20;
  auto adapter = MakeAdapter(config);
  for (int i = 0; i < 6; ++i) REQUIRE(adapter->Call(Request("c", "q"), 0).error.empty());
  const std::vector<long> arrivals = Arrivals(*server, "echo:c");
  REQUIRE(arrivals.size() == 6);
  // Sends are 1/20 s apart; arrivals also carry delivery jitter, and the first carries the
  // connection set-up, so measure from the second: 4 intervals of 50 ms, less 10 ms of slack
  // for jitter and the server's whole-millisecond stamps. Without the limiter this span is a
  // few milliseconds.
  CHECK(arrivals[5] - arrivals[1] >= 4 * 50 - 10);
}

TEST_CASE("Shutdown ends a call in flight and refuses later ones") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/hang")));
  plumb::CallResult in_flight;
  std::thread caller([&] { in_flight = adapter->Call(Request("c", "q"), 0); });
  while (Arrivals(*server, "hang:c").empty()) {
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  }
  adapter->Shutdown();
  caller.join();
  CHECK(in_flight.error == "run interrupted");
  const plumb::CallResult later = adapter->Call(Request("c", "q"), 0);
  CHECK(later.error == "run interrupted");
  CHECK(later.attempts == 0);
  adapter->Shutdown();  // idempotent
}

TEST_CASE("Shutdown ends a wait for Retry-After") {
  auto server = StartFaultServer();
  auto adapter = MakeAdapter(Config(server->Url("/retry-after?after=50")));
  plumb::CallResult waiting;
  std::thread caller([&] { waiting = adapter->Call(Request("c", "q"), 0); });
  while (adapter->retries_waiting() == 0) std::this_thread::sleep_for(std::chrono::milliseconds(5));
  adapter->Shutdown();
  caller.join();
  CHECK(waiting.error == "run interrupted");
}

TEST_CASE("when most requests fail, the circuit breaker pauses, probes, and finally gives up") {
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/status?code=503"));
  config.retries = 0;
  plumb::HttpAdapter::Options options = FastRetries();
  options.breaker.first_pause = std::chrono::milliseconds(10);
  options.breaker.max_failed_probes = 2;
  auto adapter = MakeAdapter(config, 1, options);
  // Calls 1-10 fail and open the breaker (10 of 10); calls 11 and 12 are the two probes, which
  // fail; from then on nothing is sent.
  for (int i = 1; i <= 12; ++i) {
    INFO("call " << i);
    CHECK(adapter->Call(Request("c", "q"), 0).error == "HTTP 503 Service Unavailable");
  }
  const plumb::CallResult refused = adapter->Call(Request("c", "q"), 0);
  CHECK(refused.error ==
        "not sent: the service kept failing (10 of the last 10 requests failed, then 2 probe "
        "requests after pauses failed too), so the circuit breaker stopped sending");
  CHECK(refused.attempts == 0);
  CHECK(Arrivals(*server, "status:c").size() == 12);
  CHECK(adapter->breaker_openings() == 2);
}

TEST_CASE("secrets in headers and body never come back unredacted") {
  REQUIRE(setenv("PLUMB_HTTP_TEST_BODY_SECRET", "body-secret-42", 1) == 0);
  auto server = StartFaultServer();
  plumb::PipelineConfig config = Config(server->Url("/echo-headers"));
  config.headers["Authorization"] = {"Bearer header-secret-17", "Bearer ***"};
  config.secrets = {"header-secret-17"};
  // `token: !env PLUMB_HTTP_TEST_BODY_SECRET`: the loader expands it and lists it as a secret.
  config.request = Object({{"q", Field("question")}, {"token", Value("body-secret-42")}});
  config.secrets.push_back("body-secret-42");
  auto adapter = MakeAdapter(config);
  const plumb::CallResult ok = adapter->Call(Request("c", "q"), 0);
  REQUIRE(ok.error.empty());
  CHECK(ok.body.find("Authorization: Bearer ***") != std::string::npos);
  CHECK(ok.body.find(R"(\"token\":\"***\")") != std::string::npos);
  CHECK(ok.body.find("secret-") == std::string::npos);

  config.url = plumb::ExpandedString{server->Url("/status?code=401"), ""};
  auto failing = MakeAdapter(config);
  const plumb::CallResult err = failing->Call(Request("c", "q"), 0);
  CHECK(err.error == "HTTP 401 Unauthorized");
  CHECK(err.stdout_excerpt.find("Bearer ***") != std::string::npos);
  CHECK(err.stdout_excerpt.find("secret-") == std::string::npos);
}

TEST_CASE("config mistakes are reported before any request") {
  std::string error;
  plumb::PipelineConfig get = Config("http://127.0.0.1:1/x");
  get.method = "GET";
  get.request = Value(json::array({"q"}));
  CHECK(plumb::HttpAdapter::Create(get, 1, &error) == nullptr);
  CHECK(error ==
        "pipeline 'service': method GET sends the request block's members as query parameters, "
        "so 'request' must be a mapping");

  plumb::PipelineConfig header = Config("http://127.0.0.1:1/x");
  header.headers["X-Token"] = {"a\r\nInjected: yes", "${TOKEN}"};
  CHECK(plumb::HttpAdapter::Create(header, 1, &error) == nullptr);
  CHECK(error == "pipeline 'service': header 'X-Token' contains a line break (from ${TOKEN})");
}

// --- plumb run end to end ----------------------------------------------------------------------

TEST_CASE("plumb run: every fault costs its case exactly as SPEC section 5 says and the run ends") {
  auto server = StartFaultServer();
  const std::string dir = plumb_test::MakeTempDir();
  const std::string port = std::to_string(server->port());
  plumb_test::WriteFile(
      dir + "/faults.yaml",
      "plumb: 1\nname: http-faults\nmax_error_rate: 1.0\npipelines:\n"
      "  faults:\n"
      "    url: !text [\"http://127.0.0.1:" +
          port +
          "/\", !case input.fault]\n"
          "    request: {id: !case id, question: !case question, input: !case input}\n"
          "    timeout: 1s\n    retries: 2\n    max_response_bytes: 64KiB\n    jobs: 4\n"
          "cases:\n"
          "  - {id: ok, question: echo me, answers: [echo me], input: {fault: echo}}\n"
          "  - {id: too-many, question: q429, answers: [q429], input: {fault: retry-after, after: "
          "1}}\n"
          "  - {id: unavailable, question: q503, answers: [q503], input: {fault: unavailable, "
          "times: 2}}\n"
          "  - {id: bad-request, question: q400, answers: [q400], input: {fault: status, code: "
          "400}}\n"
          "  - {id: hang, question: q, answers: [q], input: {fault: hang}}\n"
          "  - {id: reset, question: q, answers: [q], input: {fault: reset}}\n"
          "  - {id: chunked, question: in pieces, answers: [in pieces], input: {fault: chunked}}\n"
          "  - {id: big, question: q, answers: [q], input: {fault: big, bytes: 100000}}\n"
          "  - {id: big-chunked, question: q, answers: [q],"
          " input: {fault: big, bytes: 100000, chunked: 1}}\n"
          "  - {id: invalid-json, question: q, answers: [q], input: {fault: invalid-json}}\n");
  const plumb_test::Result r =
      plumb_test::Plumb({"run", dir + "/faults.yaml", "--out", dir + "/out", "--json"}, dir);
  INFO(r.err);
  // 6 of 10 errored is within max_error_rate 1.0 and there are no floors: exit 0 (SPEC §8).
  CHECK(r.code == 0);

  struct Expected {
    std::string error;  // empty: a valid reply
    int attempts;
  };
  const std::map<std::string, Expected> expected = {
      {"ok", {"", 1}},
      {"too-many", {"", 2}},
      {"unavailable", {"", 3}},
      {"bad-request", {"HTTP 400 Bad Request", 1}},
      {"hang", {"timed out after 1s", 1}},
      {"reset", {"connection reset", 1}},
      {"chunked", {"", 1}},
      {"big", {"response exceeded 64 KiB", 1}},
      {"big-chunked", {"response exceeded 64 KiB", 1}},
      {"invalid-json", {"response is not valid JSON", 1}},
  };
  const std::vector<json> records = plumb_test::ReadJournal(dir + "/out/cases.jsonl");
  REQUIRE(records.size() == expected.size());
  for (const json& record : records) {
    const std::string id = record["id"];
    INFO(id << ": " << record.dump());
    const Expected& e = expected.at(id);
    CHECK(record["attempts"] == e.attempts);
    if (e.error.empty()) {
      CHECK(record["error"].is_null());
      CHECK(record["scores"]["exact_match"] == 1.0);
    } else {
      CHECK(record["error"]["reason"] == e.error);
      CHECK(record["scores"]["exact_match"] == 0.0);
    }
  }
  const json run = json::parse(plumb_test::ReadFile(dir + "/out/run.json"));
  CHECK(run["aggregates"]["errored"] == 6);
}

TEST_CASE("plumb run: an answer pointer that does not resolve is a case error naming it") {
  auto server = StartFaultServer();
  const std::string dir = plumb_test::MakeTempDir();
  plumb_test::WriteFile(dir + "/pointer.yaml",
                        "plumb: 1\nname: pointer\nmax_error_rate: 1.0\npipelines:\n"
                        "  nested:\n"
                        "    url: !text [\"http://127.0.0.1:" +
                            std::to_string(server->port()) +
                            "/\", !case input.fault]\n"
                            "    request: {id: !case id, question: !case question, input: "
                            "!case input}\n"
                            "    reply: {answer: /data/text}\n"
                            "cases:\n"
                            "  - {id: mapped, question: q, answers: [q], input: {fault: map}}\n"
                            "  - {id: flat, question: q, answers: [q], input: {fault: echo}}\n");
  const plumb_test::Result r =
      plumb_test::Plumb({"run", dir + "/pointer.yaml", "--out", dir + "/out"}, dir);
  INFO(r.err);
  CHECK(r.code == 0);
  for (const json& record : plumb_test::ReadJournal(dir + "/out/cases.jsonl")) {
    INFO(record.dump());
    if (record["id"] == "mapped") {
      CHECK(record["error"].is_null());
      CHECK(record["answer"] == "q");
    } else {
      CHECK(record["error"]["reason"] == "response has no answer at '/data/text'");
    }
  }
}

namespace {

// A run's aggregates without the latency and warm-up figures, which differ between any two runs
// (and a subprocess's first calls are warm-up, which an HTTP service without ready_url has none
// of).
json WithoutLatency(json value) {
  if (value.is_object()) {
    value.erase("latency_ms");
    value.erase("warmup");
    for (auto& [key, item] : value.items()) item = WithoutLatency(item);
  }
  return value;
}

}  // namespace

TEST_CASE("the demo pipeline scores the same over HTTP as over JSON lines") {
  const std::string docs = PLUMB_SOURCE_DIR "/fixtures/ferry/docs";
  ServerProcess demo(plumb_test::kFixtures + "demo-pipeline",
                     {"--docs", docs, "--top-k", "3", "--serve", "0"}, /*port_on_stderr=*/true);
  const std::string dir = plumb_test::MakeTempDir();
  // suites/ferry-http.yaml as shipped, pointed at this server's port, plus the subprocess
  // pipeline and the grader's pipeline of suites/ferry.yaml with absolute paths (this test does
  // not run from the repository root).
  std::string pipelines = plumb_test::ReadFile(PLUMB_SOURCE_DIR "/suites/ferry-http.yaml");
  const std::string shipped = "127.0.0.1:8088";
  REQUIRE(pipelines.find(shipped) != std::string::npos);
  pipelines.replace(pipelines.find(shipped), shipped.size(),
                    "127.0.0.1:" + std::to_string(demo.port()));
  pipelines += "  retrieve:\n    command: [" + plumb_test::kFixtures + "demo-pipeline, --docs, " +
               docs + ", --top-k, \"3\"]\n  grader:\n    command: [" + plumb_test::kFixtures +
               "demo-grader]\n";
  plumb_test::WriteFile(dir + "/pipelines.yaml", pipelines);
  const plumb_test::Result r = plumb_test::Plumb(
      {"run", PLUMB_SOURCE_DIR "/suites/ferry.yaml", "--pipelines", dir + "/pipelines.yaml",
       "--pipeline", "retrieve", "--pipeline", "retrieve-http", "--out", dir + "/out",
       "--grade-cache", dir + "/grades.sqlite"},
      dir);
  INFO(r.err);
  REQUIRE((r.code == 0 || r.code == 1));  // 1: a demo floor may break; both runs still finish
  const json sub = json::parse(plumb_test::ReadFile(dir + "/out/retrieve/run.json"));
  const json http = json::parse(plumb_test::ReadFile(dir + "/out/retrieve-http/run.json"));
  CHECK(http["aggregates"]["errored"] == 0);
  CHECK(http["aggregates"]["items"] == sub["aggregates"]["items"]);
  CHECK(WithoutLatency(http["aggregates"]) == WithoutLatency(sub["aggregates"]));
}
