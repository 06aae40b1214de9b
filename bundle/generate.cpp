#include "bundle/generate.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <condition_variable>
#include <csignal>
#include <fstream>
#include <map>
#include <mutex>
#include <thread>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "bundle/chunk_codec.hpp"
#include "bundle/run_directory.hpp"
#include "bundle/scratch_file.hpp"
#include "bundle/staged_record.hpp"
#include "bundle/writer.hpp"
#include "core/error.hpp"
#include "generator/pipeline.hpp"
#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"

namespace stethogen::bundle {

namespace fs = std::filesystem;

namespace {

std::atomic<int> g_signal{0};

extern "C" void on_stop_signal(int sig) {
  g_signal.store(sig);
  // A second signal ends the process at once.
  std::signal(sig, SIG_DFL);
}

// Installs the stop handlers for the run's lifetime; ignores SIGXFSZ so a file-size limit is a
// write error (reported) instead of a silent kill.
class SignalScope {
 public:
  SignalScope() {
    g_signal.store(0);
    old_int_ = std::signal(SIGINT, on_stop_signal);
    old_term_ = std::signal(SIGTERM, on_stop_signal);
    old_xfsz_ = std::signal(SIGXFSZ, SIG_IGN);
  }
  ~SignalScope() {
    std::signal(SIGINT, old_int_);
    std::signal(SIGTERM, old_term_);
    std::signal(SIGXFSZ, old_xfsz_);
  }

 private:
  void (*old_int_)(int);
  void (*old_term_)(int);
  void (*old_xfsz_)(int);
};

struct Manifest {
  std::string recipe_sha256;
  std::uint32_t shard_index = 0, shard_count = 1;
  std::uint64_t begin = 0, end = 0;
};

void write_manifest(const fs::path& workdir, const Manifest& m) {
  nlohmann::json j = {{"recipe_sha256", m.recipe_sha256}, {"shard_index", m.shard_index},
                      {"shard_count", m.shard_count}, {"record_begin", m.begin}, {"record_end", m.end}};
  std::ofstream out(workdir / "run.json");
  out << j.dump(2) << "\n";
  if (!out) throw RuntimeFailure(fmt::format("{}: cannot write the run manifest", (workdir / "run.json").string()));
}

Manifest read_manifest(const fs::path& workdir) {
  std::ifstream in(workdir / "run.json");
  try {
    nlohmann::json j = nlohmann::json::parse(in);
    return {j.at("recipe_sha256").get<std::string>(), j.at("shard_index").get<std::uint32_t>(),
            j.at("shard_count").get<std::uint32_t>(), j.at("record_begin").get<std::uint64_t>(),
            j.at("record_end").get<std::uint64_t>()};
  } catch (const std::exception& e) {
    throw InputError(fmt::format("{}: unreadable run manifest ({}); pass --force to start over",
                                 (workdir / "run.json").string(), e.what()));
  }
}

// A failing record under on_record_error = "stop".
struct StopOnFailure : RuntimeFailure {
  using RuntimeFailure::RuntimeFailure;
};

// One synthesised record as the bundle stores it, or the reason it failed.
struct Outcome {
  std::optional<StagedRecord> record;
  std::string record_id;
  std::string failure;
};

// Synthesises records [begin, end) on worker threads, and stages them there too (chunks filtered:
// shuffle, deflate, checksums, the costly part of writing); take(i)
// hands them to the single HDF5 writer in index order. At most `window` records are held at
// once, so memory is flat in the record count.
// With one thread there are no workers: take(i) synthesises record i itself, so `--threads 1`
// keeps one core busy and N threads scale against it (the writer's share is a few ms per record).
class RecordPipeline {
 public:
  RecordPipeline(const recipe::Recipe& recipe, RecordRange todo, unsigned threads,
                 std::function<Record(const SubjectSpec&)> synthesize, const BundleAttributes& attributes)
      : recipe_(recipe), synthesize_(std::move(synthesize)), settings_(staging_settings(attributes)),
        next_dispatch_(todo.begin), end_(todo.end),
        next_write_(todo.begin),
        window_(2 * threads), inline_(threads <= 1) {
    if (!inline_)
      for (unsigned t = 0; t < threads; ++t) workers_.emplace_back([this] { work(); });
  }
  ~RecordPipeline() { stop_and_join(); }

  // The outcome of record i, or nullopt once stopping and i was never started.
  std::optional<Outcome> take(std::uint64_t i) {
    if (inline_) {
      if (stopping_ || g_signal || i >= end_) return std::nullopt;
      next_dispatch_ = i + 1;
      return produce(i);
    }
    std::unique_lock lock(mu_);
    // Timed waits: a signal sets g_signal without notifying.
    while (!done_cv_.wait_for(lock, std::chrono::milliseconds(100), [&] {
      return results_.count(i) || ((stopping_ || g_signal) && i >= next_dispatch_);
    })) {
    }
    auto it = results_.find(i);
    if (it == results_.end()) return std::nullopt;
    Outcome out = std::move(it->second);
    results_.erase(it);
    next_write_ = i + 1;
    space_cv_.notify_all();
    return out;
  }

  // Stop dispatching; records in flight still finish.
  void stop() {
    std::lock_guard lock(mu_);
    stopping_ = true;
    space_cv_.notify_all();
    done_cv_.notify_all();
  }

  void stop_and_join() {
    stop();
    for (std::thread& t : workers_)
      if (t.joinable()) t.join();
  }

 private:
  void work() {
    while (true) {
      std::uint64_t i = 0;
      {
        std::unique_lock lock(mu_);
        space_cv_.wait_for(lock, std::chrono::milliseconds(100), [&] {
          return stopping_ || g_signal || next_dispatch_ >= end_ || next_dispatch_ < next_write_ + window_;
        });
        if (stopping_ || g_signal || next_dispatch_ >= end_) {
          done_cv_.notify_all();
          return;
        }
        if (next_dispatch_ >= next_write_ + window_) continue;
        i = next_dispatch_++;
      }
      Outcome out = produce(i);
      std::lock_guard lock(mu_);
      results_.emplace(i, std::move(out));
      done_cv_.notify_all();
    }
  }

  // Record i synthesised and staged, or why it failed.
  Outcome produce(std::uint64_t i) {
    Outcome out;
    out.record_id = recipe::record_id(i);
    try {
      SubjectSpec subject = recipe::plan_record(recipe_, i);
      out.record_id = subject.record_id;
      const Record record = synthesize_(subject);
      out.record = stage_record(record, encode_record(record, RecordParts::all(), settings_.sample_format,
                                                      settings_.compression),
                                RecordParts::all(), settings_);
    } catch (const std::exception& e) {
      out.failure = e.what();
    }
    return out;
  }

  const recipe::Recipe& recipe_;
  std::function<Record(const SubjectSpec&)> synthesize_;
  StagingSettings settings_;
  std::mutex mu_;
  std::condition_variable done_cv_, space_cv_;
  std::map<std::uint64_t, Outcome> results_;
  std::uint64_t next_dispatch_, end_, next_write_;
  std::uint64_t window_;
  bool stopping_ = false;
  bool inline_;
  std::vector<std::thread> workers_;
};

BundleAttributes run_attributes(const recipe::Recipe& recipe, const Shard& shard) {
  BundleAttributes a;
  a.recipe_toml = recipe.text;
  a.recipe_sha256 = recipe.sha256_hex;
  a.seed = recipe.dataset.seed;
  a.record_count = recipe::record_count(recipe);
  a.sample_format = recipe.dataset.sample_format;
  a.compression = recipe.dataset.compression;
  if (!shard.whole()) {
    a.shard_index = static_cast<std::int32_t>(shard.index);
    a.shard_count = static_cast<std::int32_t>(shard.count);
  }
  return a;
}

std::string resume_hint(const GenerateOptions& o, const fs::path& output) {
  std::string cmd = fmt::format("stethogen generate {} -o {}", o.recipe.string(), output.string());
  if (!o.shard.whole() && o.shard.source == "--shard") cmd += fmt::format(" --shard {}/{}", o.shard.index + 1, o.shard.count);
  return cmd + " --resume";
}

}  // namespace

fs::path shard_output_path(const fs::path& path, const Shard& shard, bool explicit_path) {
  std::string p = path.string();
  if (auto pos = p.find("{shard}"); pos != std::string::npos) return p.replace(pos, 7, shard.tag());
  if (shard.whole()) return path;
  if (explicit_path && shard.source == "--shard") return path;
  if (explicit_path)
    throw InputError(fmt::format("-o {}: every task of the array would write this file; put {{shard}} in the name "
                                 "(e.g. -o part-{{shard}}.h5)", p));
  fs::path out = path;
  out.replace_extension(fmt::format(".shard-{}{}", shard.tag(), path.extension().string()));
  return out;
}

GenerateResult generate(const GenerateOptions& options) {
  recipe::Recipe recipe = recipe::load_recipe(options.recipe.string());
  const std::uint64_t total = recipe::record_count(recipe);
  const RecordRange range = shard_range(options.shard, total);
  const fs::path output = shard_output_path(options.output ? *options.output : fs::path(recipe.dataset.output),
                                            options.shard, options.output.has_value());
  const fs::path workdir = output.string() + ".partial";
  const BundleAttributes attributes = run_attributes(recipe, options.shard);
  const bool skip_failures = recipe.dataset.on_record_error == FailurePolicy::skip;

  // Before any work: --force replaces a file, never a directory (the final rename would fail).
  if (fs::is_directory(output))
    throw InputError(fmt::format("{}: is a directory; -o must name the bundle file to write", output.string()));
  if (fs::exists(output) && !options.force)
    throw InputError(fmt::format("{}: output exists; pass --force to replace it", output.string()));
  if (output.has_parent_path() && !fs::is_directory(output.parent_path()))
    throw InputError(fmt::format("{}: directory {} does not exist", output.string(), output.parent_path().string()));

  const Manifest manifest{recipe.sha256_hex, options.shard.index, options.shard.count, range.begin, range.end};
  std::uint64_t next = range.begin;
  bool resuming = false;
  if (fs::exists(workdir)) {
    if (!fs::is_directory(workdir))
      throw InputError(fmt::format("{}: exists and is not a run directory; remove it", workdir.string()));
    if (options.resume) {
      Manifest old = read_manifest(workdir);
      if (old.recipe_sha256 != manifest.recipe_sha256)
        throw InputError(fmt::format("--resume: {} changed since the interrupted run (recipe_sha256 {} then, {} now); "
                                     "pass --force without --resume to start over",
                                     options.recipe.string(), old.recipe_sha256, manifest.recipe_sha256));
      if (old.shard_index != manifest.shard_index || old.shard_count != manifest.shard_count ||
          old.begin != manifest.begin || old.end != manifest.end)
        throw InputError(fmt::format("--resume: the interrupted run in {} was shard {}/{}, this is {}/{}",
                                     workdir.string(), old.shard_index + 1, old.shard_count,
                                     manifest.shard_index + 1, manifest.shard_count));
      resuming = true;
    } else if (options.force) {
      fs::remove_all(workdir);
    } else {
      throw InputError(fmt::format("{}: an interrupted run is here; pass --resume to continue it, or --force to "
                                   "discard it and start over", workdir.string()));
    }
  }
  fs::create_directories(workdir);
  write_manifest(workdir, manifest);

  GenerateResult result;
  result.output = output;
  SignalScope signals;
  const auto write_failure = [&](const std::exception& e) {
    return RuntimeFailure(fmt::format("{}\nno output written; completed records are kept in {}: fix the cause and "
                                      "run `{}`", e.what(), workdir.string(), resume_hint(options, output)));
  };
  // The bundle is written as the records come, under a temporary name in the run directory, and
  // renamed into place at the end; an interrupted run leaves only its scratch files.
  // The data file of this start: a new generation, so the chunks of earlier ones stay readable
  // until every record saved there is written again (a kill during the rebuild loses nothing).
  // The bundle is always written from the staged records, in record order, so it has the same
  // bytes whatever the thread count or interruptions (bundle/run_directory.hpp).
  const std::vector<std::uint64_t> generations = data_generations(workdir);
  const std::uint64_t generation = generations.empty() ? 1 : *std::max_element(generations.begin(), generations.end()) + 1;
  WriterOptions wo;
  wo.overwrite = options.force;
  wo.temp_path = workdir / data_file_name(generation);
  wo.keep_temp = true;
  std::optional<BundleWriter> bundle;
  std::string damaged_note;
  // A record into the bundle; its scratch entry, to save once its chunks are in the data file.
  const auto write_record = [&](StagedRecord&& record) {
    ScratchEntry entry;
    entry.generation = generation;
    bundle->write_staged(record, &entry.chunk_offsets);
    entry.record = std::move(record);
    return scratch_bytes(entry);
  };
  try {
    bundle.emplace(output, attributes, wo);
    // The records an interrupted run saved, in order, file by file; each file is saved again
    // pointing into the new data file. A damaged scratch file or chunk (e.g. after a power cut)
    // is made again, with everything after it.
    const std::map<std::uint64_t, fs::path> files = resuming ? scratch_files(workdir) : std::map<std::uint64_t, fs::path>{};
    for (const auto& [first, path] : files) {
      if (first != next) break;  // a gap: the rest is made again
      std::vector<std::vector<unsigned char>> rebuilt;
      std::string damage;
      try {
        for (ScratchEntry& e : load_scratch(path)) {
          const std::uint64_t index = e.record ? e.record->row.record_index : e.skipped->record_index;
          if (index != next || next >= range.end)
            throw RuntimeFailure(fmt::format("{}: holds record {}, not {}", path.string(), index, next));
          if (e.record) {
            load_chunks(e, workdir, path);
            rebuilt.push_back(write_record(std::move(*e.record)));
          } else {
            bundle->add_skipped(*e.skipped);
            ++result.records_skipped;
            rebuilt.push_back(scratch_bytes(e));
          }
          ++next;
        }
      } catch (const RuntimeFailure& e) {
        damage = fmt::format("generate: {}; making record {} and those after it again", e.what(), next);
      }
      if (!rebuilt.empty()) save_scratch(path, rebuilt);
      if (!damage.empty()) {
        damaged_note = damage;
        break;
      }
    }
    for (const auto& [first, path] : files)
      if (first >= next) fs::remove(path);
    // Every saved record now points into this generation's data file.
    for (std::uint64_t g : generations) {
      std::error_code ec;  // one left behind is removed by the next start or with the run directory
      if (g != generation) fs::remove(workdir / data_file_name(g), ec);
    }
  } catch (const RuntimeFailure& e) {
    throw write_failure(e);
  }
  result.records_written = bundle->records_written();

  Progress progress(options.progress, range.size(), next - range.begin);
  if (!damaged_note.empty()) progress.note(damaged_note);
  if (options.resume)
    progress.note(next > range.begin ? fmt::format("generate: resuming at record {} ({} of {} already done)", next,
                                                   next - range.begin, range.size())
                                     : "generate: nothing to resume; starting from the first record");

  unsigned threads = options.threads ? options.threads : std::max(1u, std::thread::hardware_concurrency());
  auto synthesize = options.synthesize ? options.synthesize
                                       : [](const SubjectSpec& s) { return gen::synthesize_record(s); };
  RecordPipeline pipeline(recipe, {next, range.end}, threads, synthesize, attributes);

  std::uint64_t i = next;
  ScratchBatch batch(workdir);
  try {
    for (; i < range.end; ++i) {
      std::optional<Outcome> out = pipeline.take(i);
      if (!out) break;  // interrupted: nothing more in flight
      if (!out->failure.empty()) {
        if (!skip_failures)
          throw StopOnFailure(fmt::format(
              "record {} failed: {}\nstopped (dataset.on_record_error = \"stop\"); the {} records before it are kept "
              "in {}. Set on_record_error = \"skip\" to leave failing records out (then start over with --force).",
              out->record_id, out->failure, i - range.begin, workdir.string()));
        progress.note(fmt::format("generate: skipped record {}: {}", out->record_id, out->failure));
      }
      if (out->record) {
        const double duration_s = out->record->row.duration_s;
        batch.add(i, write_record(std::move(*out->record)));
        ++result.records_written;
        progress.advance(duration_s);
      } else {
        const SkippedRecord skipped{out->record_id, i, out->failure};
        bundle->add_skipped(skipped);
        batch.add(i, scratch_bytes(ScratchEntry{std::nullopt, skipped, 0, {}, {}, {}}));
        ++result.records_skipped;
        progress.advance(0);
      }
    }
    pipeline.stop_and_join();
    if (i == range.end) bundle->finish();
    else batch.save();
  } catch (const StopOnFailure&) {
    pipeline.stop_and_join();
    batch.save_quietly();
    progress.finish();
    throw;
  } catch (const RuntimeFailure& e) {
    pipeline.stop_and_join();
    batch.save_quietly();
    progress.finish();
    throw write_failure(e);
  }
  progress.finish();

  if (i < range.end) {
    bundle.reset();  // abandons the unfinished bundle
    result.interrupted = true;
    fmt::print(stderr, "generate: interrupted by signal {}: {} of {} records are saved in {}\n"
               "generate: to continue, run `{}`\n", g_signal.load(), i - range.begin, range.size(),
               workdir.string(), resume_hint(options, output));
    return result;
  }
  fs::remove_all(workdir);
  return result;
}

}  // namespace stethogen::bundle
