#!/usr/bin/python3
"""A Python client of Shingleton's gRPC services, against real servers.

Checks the servers from outside the C++ code base, with interfaces that are not
the project's own implementation:
  * the wire API: stubs generated at test time from proto/shingleton/v1/service.proto
    by protoc and grpc_python_plugin (Debian's python3-grpcio / python3-protobuf);
  * the standard gRPC health checking protocol, service grpc.health.v1.Health, as
    published in the grpc/grpc repository, doc/health-checking.md. The proto below
    is written from that published definition (from memory), not taken from the
    project: the servers must answer it as any stock gRPC health client expects.

It starts one IndexShard and one Coordinator on 127.0.0.1 (port 0), ingests the
demo corpus with the C++ ingest worker, queries from Python, then stops both
servers with SIGTERM and expects exit code 0. Every RPC has a deadline and every
wait is bounded. The last line printed is "N passed, M failed".

Run with Debian's /usr/bin/python3 (it has the grpc and protobuf modules):
  /usr/bin/python3 tests/python_client_test.py --binary build/bin/shingleton \
      --proto-dir proto --protoc /usr/bin/protoc \
      --grpc-python-plugin /usr/bin/grpc_python_plugin \
      --corpus demo_data/crawl-2026-11.jsonl
"""

import argparse
import importlib
import json
import os
import re
import signal
import subprocess
import sys
import tempfile
import time
import traceback

import grpc

RPC_TIMEOUT = 10.0          # seconds, deadline of every RPC
START_TIMEOUT = 20.0        # seconds to wait for a port file
STOP_TIMEOUT = 20.0         # seconds to wait for a clean exit after SIGTERM
INGEST_TIMEOUT = 90.0       # seconds for the C++ ingest worker

# grpc.health.v1 as published in grpc/grpc doc/health-checking.md (written from
# memory of that document; field numbers and enum values as published).
HEALTH_PROTO = """\
syntax = "proto3";

package grpc.health.v1;

message HealthCheckRequest {
  string service = 1;
}

message HealthCheckResponse {
  enum ServingStatus {
    UNKNOWN = 0;
    SERVING = 1;
    NOT_SERVING = 2;
    SERVICE_UNKNOWN = 3;  // Used only by the Watch method.
  }
  ServingStatus status = 1;
}

service Health {
  rpc Check(HealthCheckRequest) returns (HealthCheckResponse);
  rpc Watch(HealthCheckRequest) returns (stream HealthCheckResponse);
}
"""


# grpc.reflection.v1alpha as published in grpc/grpc src/proto/grpc/reflection/v1alpha/
# reflection.proto and doc/server-reflection.md (written from memory of those files;
# only the messages this test uses need to match on the wire).
REFLECTION_PROTO = """\
syntax = "proto3";

package grpc.reflection.v1alpha;

message ServerReflectionRequest {
  string host = 1;
  oneof message_request {
    string file_by_filename = 3;
    string file_containing_symbol = 4;
    string list_services = 7;
  }
}

message FileDescriptorResponse {
  repeated bytes file_descriptor_proto = 1;
}

message ServiceResponse {
  string name = 1;
}

message ListServiceResponse {
  repeated ServiceResponse service = 1;
}

message ErrorResponse {
  int32 error_code = 1;
  string error_message = 2;
}

message ServerReflectionResponse {
  string valid_host = 1;
  ServerReflectionRequest original_request = 2;
  oneof message_response {
    FileDescriptorResponse file_descriptor_response = 4;
    ListServiceResponse list_services_response = 6;
    ErrorResponse error_response = 7;
  }
}

service ServerReflection {
  rpc ServerReflectionInfo(stream ServerReflectionRequest)
      returns (stream ServerReflectionResponse);
}
"""


class Results:
    def __init__(self):
        self.passed = 0
        self.failed = 0

    def run(self, name, fn, *args):
        """Runs one check; an exception or AssertionError is a failure."""
        t0 = time.monotonic()
        try:
            fn(*args)
        except Exception:  # noqa: BLE001 - any error is a test failure
            self.failed += 1
            print(f"[FAIL] {name} ({time.monotonic() - t0:.2f}s)")
            traceback.print_exc(file=sys.stdout)
            return False
        self.passed += 1
        print(f"[ OK ] {name} ({time.monotonic() - t0:.2f}s)")
        return True


def check(cond, message):
    if not cond:
        raise AssertionError(message)


# ---- setup ------------------------------------------------------------------------

def generate_stubs(args, tmp):
    """Generates the Python modules of service.proto and of grpc.health.v1."""
    out = os.path.join(tmp, "gen")
    os.makedirs(out)
    plugin = f"--plugin=protoc-gen-grpc_python={args.grpc_python_plugin}"
    subprocess.run(
        [args.protoc, "-I", args.proto_dir, f"--python_out={out}",
         f"--grpc_python_out={out}", plugin, "shingleton/v1/service.proto"],
        check=True, timeout=60)
    # Own directory for the health proto; its Python module is named after the file
    # (health_pb2), so it does not clash with the installed `grpc` package.
    health_dir = os.path.join(tmp, "health_proto")
    os.makedirs(health_dir)
    with open(os.path.join(health_dir, "health.proto"), "w", encoding="utf-8") as f:
        f.write(HEALTH_PROTO)
    subprocess.run(
        [args.protoc, "-I", health_dir, f"--python_out={out}",
         f"--grpc_python_out={out}", plugin, "health.proto"],
        check=True, timeout=60)
    with open(os.path.join(health_dir, "reflection.proto"), "w", encoding="utf-8") as f:
        f.write(REFLECTION_PROTO)
    subprocess.run(
        [args.protoc, "-I", health_dir, f"--python_out={out}",
         f"--grpc_python_out={out}", plugin, "reflection.proto"],
        check=True, timeout=60)
    for pkg in ("shingleton", os.path.join("shingleton", "v1")):
        init = os.path.join(out, pkg, "__init__.py")
        if not os.path.exists(init):
            open(init, "w", encoding="utf-8").close()
    sys.path.insert(0, out)
    mods = {
        "pb": importlib.import_module("shingleton.v1.service_pb2"),
        "rpc": importlib.import_module("shingleton.v1.service_pb2_grpc"),
        "hpb": importlib.import_module("health_pb2"),
        "hrpc": importlib.import_module("health_pb2_grpc"),
        "rpb": importlib.import_module("reflection_pb2"),
        "rrpc": importlib.import_module("reflection_pb2_grpc"),
    }
    return mods


class Server:
    """A `shingleton` server subprocess with its log files."""

    def __init__(self, name, cmd, port_file, log_dir):
        self.name = name
        self.port_file = port_file
        self.log_path = os.path.join(log_dir, name + ".log")
        self.log = open(self.log_path, "wb")
        self.proc = subprocess.Popen(cmd, stdin=subprocess.DEVNULL,
                                     stdout=self.log, stderr=subprocess.STDOUT)
        self.address = None

    def wait_ready(self):
        deadline = time.monotonic() + START_TIMEOUT
        while time.monotonic() < deadline:
            if self.proc.poll() is not None:
                raise AssertionError(f"{self.name} exited early with {self.proc.returncode}:\n"
                                     + self.tail())
            try:
                with open(self.port_file, encoding="utf-8") as f:
                    text = f.read()
            except FileNotFoundError:
                text = ""
            if text.endswith("\n") and text.strip():
                addr = text.strip()
                check(re.fullmatch(r"127\.0\.0\.1:\d+", addr) is not None,
                      f"{self.name} port file holds {text!r}, expected 127.0.0.1:PORT")
                check(int(addr.rsplit(":", 1)[1]) > 0, f"{self.name} port 0 in port file")
                self.address = addr
                return addr
            time.sleep(0.05)
        raise AssertionError(f"{self.name}: no port file after {START_TIMEOUT}s\n" + self.tail())

    def tail(self, n=4000):
        self.log.flush()
        try:
            with open(self.log_path, "rb") as f:
                data = f.read()
        except OSError:
            return ""
        return data[-n:].decode("utf-8", "replace")

    def terminate_and_wait(self):
        """SIGTERM, then waits; returns the exit code (None if it did not stop)."""
        if self.proc.poll() is None:
            self.proc.send_signal(signal.SIGTERM)
        try:
            return self.proc.wait(timeout=STOP_TIMEOUT)
        except subprocess.TimeoutExpired:
            return None

    def kill(self):
        if self.proc.poll() is None:
            self.proc.kill()
            try:
                self.proc.wait(timeout=10)
            except subprocess.TimeoutExpired:
                pass
        self.log.close()


def read_corpus(path):
    docs = []
    with open(path, encoding="utf-8") as f:
        for line in f:
            if line.strip():
                docs.append(json.loads(line))
    return docs


def edit_words(text, every=200, offset=100):
    """Replaces word `offset`, `offset + every`, ... by a new word; keeps whitespace."""
    pieces, last, changed = [], 0, 0
    for i, m in enumerate(re.finditer(r"\S+", text)):
        if i % every == offset % every and i >= offset:
            pieces.append(text[last:m.start()])
            pieces.append(f"Quuxedited{i}")
            last = m.end()
            changed += 1
    pieces.append(text[last:])
    return "".join(pieces), changed


# ---- checks -----------------------------------------------------------------------

def check_health(m, address):
    with grpc.insecure_channel(address) as ch:
        stub = m["hrpc"].HealthStub(ch)
        resp = stub.Check(m["hpb"].HealthCheckRequest(service=""), timeout=RPC_TIMEOUT)
        check(resp.status == m["hpb"].HealthCheckResponse.SERVING,
              f"Health.Check('') on {address}: status {resp.status}, expected SERVING (1)")
        # Watch: the first message carries the current status.
        call = stub.Watch(m["hpb"].HealthCheckRequest(service=""), timeout=RPC_TIMEOUT)
        try:
            first = next(call)
            check(first.status == m["hpb"].HealthCheckResponse.SERVING,
                  f"Health.Watch('') on {address}: first status {first.status}")
        finally:
            call.cancel()


def check_reflection(m, address):
    """Server reflection lists our services and serves service.proto's descriptor."""
    from google.protobuf import descriptor_pb2
    with grpc.insecure_channel(address) as ch:
        stub = m["rrpc"].ServerReflectionStub(ch)
        reqs = [m["rpb"].ServerReflectionRequest(list_services=""),
                m["rpb"].ServerReflectionRequest(
                    file_containing_symbol="shingleton.v1.Coordinator")]
        answers = list(stub.ServerReflectionInfo(iter(reqs), timeout=10))
    check(len(answers) == 2, f"expected 2 reflection answers, got {len(answers)}")
    names = {s.name for s in answers[0].list_services_response.service}
    for want in ("shingleton.v1.Coordinator", "grpc.health.v1.Health"):
        check(want in names, f"{want} not listed by reflection: {sorted(names)}")
    files = answers[1].file_descriptor_response.file_descriptor_proto
    check(len(files) >= 1, "no descriptor for shingleton.v1.Coordinator")
    fd = descriptor_pb2.FileDescriptorProto.FromString(files[0])
    check(fd.name == "shingleton/v1/service.proto", f"descriptor of {fd.name}")
    check(any(svc.name == "Coordinator" for svc in fd.service), "no Coordinator in descriptor")


def check_candidates_well_formed(resp, what):
    cands = list(resp.candidates)
    for c in cands:
        check(0.0 < c.similarity <= 1.0,
              f"{what}: candidate {c.id} similarity {c.similarity} not in (0, 1]")
        check(c.id != "", f"{what}: candidate with empty id")
    for a, b in zip(cands, cands[1:]):
        check(a.similarity > b.similarity or (a.similarity == b.similarity and a.id < b.id),
              f"{what}: not best first, ties by id: ({a.id}, {a.similarity}) before "
              f"({b.id}, {b.similarity})")
    check(len({c.id for c in cands}) == len(cands), f"{what}: repeated candidate ids")
    return cands


def check_query_exact(m, address, docs):
    """Querying with the text of a stored document finds it at similarity 1."""
    by_text = {}
    for d in docs:
        by_text.setdefault(d["text"], []).append(d["id"])
    urls = {d["id"]: d.get("url", "") for d in docs}
    # Documents spread over the corpus, plus one whose text is repeated verbatim.
    picks = [docs[i] for i in (0, 1, len(docs) // 3, len(docs) // 2, 2 * len(docs) // 3,
                               len(docs) - 1)]
    dup = next((d for d in docs if len(by_text[d["text"]]) > 1), None)
    if dup is not None:
        picks.append(dup)
    strictly_first = 0
    with grpc.insecure_channel(address) as ch:
        stub = m["rpc"].CoordinatorStub(ch)
        for d in picks:
            what = f"Query(text of {d['id']})"
            resp = stub.Query(m["pb"].QueryRequest(job="demo", text=d["text"]),
                              timeout=RPC_TIMEOUT)
            cands = check_candidates_well_formed(resp, what)
            check(cands, f"{what}: no candidates")
            check(cands[0].similarity == 1.0,
                  f"{what}: first candidate {cands[0].id} has similarity {cands[0].similarity}")
            top = [c.id for c in cands if c.similarity == 1.0]
            check(d["id"] in top,
                  f"{what}: own id not among the similarity-1 candidates {top[:10]}")
            own = next(c for c in cands if c.id == d["id"])
            check(own.url == urls[d["id"]],
                  f"{what}: url {own.url!r}, corpus has {urls[d['id']]!r}")
            # Every verbatim copy of the text must be there at similarity 1 too.
            for other in by_text[d["text"]]:
                check(other in top, f"{what}: verbatim copy {other} not at similarity 1")
            if cands[0].id == d["id"]:
                strictly_first += 1
            # limit is respected.
            resp1 = stub.Query(m["pb"].QueryRequest(job="demo", text=d["text"], limit=1),
                               timeout=RPC_TIMEOUT)
            check(len(resp1.candidates) == 1 and resp1.candidates[0].id == cands[0].id,
                  f"{what} limit=1: {[(c.id, c.similarity) for c in resp1.candidates]}")
    check(strictly_first >= 1, "no picked document came back as the first candidate")


def check_query_edited(m, address, docs):
    """One word in 200 changed: the original is still found, similarity >= 0.8."""
    d = max(docs, key=lambda x: (len(x["text"].split()), x["id"]))
    words = len(d["text"].split())
    check(words >= 200, f"longest document {d['id']} has only {words} words")
    edited, changed = edit_words(d["text"])
    check(changed >= 1 and edited != d["text"], "the edit changed nothing")
    with grpc.insecure_channel(address) as ch:
        stub = m["rpc"].CoordinatorStub(ch)
        resp = stub.Query(m["pb"].QueryRequest(job="demo", text=edited), timeout=RPC_TIMEOUT)
    what = f"Query(edited {d['id']}, {changed} of {words} words)"
    cands = check_candidates_well_formed(resp, what)
    hit = next((c for c in cands if c.id == d["id"]), None)
    check(hit is not None,
          f"{what}: original missing from {[(c.id, c.similarity) for c in cands][:10]}")
    check(hit.similarity >= 0.8, f"{what}: similarity {hit.similarity} < 0.8")
    print(f"       {what}: original at similarity {hit.similarity:.4f}")


def check_unknown_job(m, address):
    with grpc.insecure_channel(address) as ch:
        stub = m["rpc"].CoordinatorStub(ch)
        try:
            stub.Query(m["pb"].QueryRequest(job="no-such-job", text="some words here to sign"),
                       timeout=RPC_TIMEOUT)
        except grpc.RpcError as e:
            check(e.code() == grpc.StatusCode.NOT_FOUND,
                  f"Query(unknown job): {e.code()} {e.details()!r}, expected NOT_FOUND")
        else:
            raise AssertionError("Query(unknown job) succeeded, expected NOT_FOUND")


def check_job_stats(m, address, docs):
    with grpc.insecure_channel(address) as ch:
        stub = m["rpc"].CoordinatorStub(ch)
        st = stub.GetJobStats(m["pb"].JobStatsRequest(job="demo"), timeout=RPC_TIMEOUT)
    check(st.job == "demo", f"GetJobStats: job {st.job!r}")
    check(st.documents == len(docs),
          f"GetJobStats: documents {st.documents}, corpus has {len(docs)} lines")
    check(st.scheme.startswith("shingleton-scheme/"), f"GetJobStats: scheme {st.scheme!r}")
    check(st.batches >= 1, f"GetJobStats: batches {st.batches}")
    check(not st.finalized, "GetJobStats: finalized before any Finalize")
    print(f"       stats: documents={st.documents} batches={st.batches} "
          f"shards={len(st.shards)} scheme={st.scheme!r}")


# ---- main -------------------------------------------------------------------------

def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--binary", required=True)
    ap.add_argument("--proto-dir", required=True)
    ap.add_argument("--protoc", required=True)
    ap.add_argument("--grpc-python-plugin", required=True)
    ap.add_argument("--corpus", required=True)
    args = ap.parse_args()
    for attr in ("binary", "proto_dir", "protoc", "grpc_python_plugin", "corpus"):
        setattr(args, attr, os.path.abspath(getattr(args, attr)))

    res = Results()
    t_start = time.monotonic()
    servers = []
    try:
        with tempfile.TemporaryDirectory(prefix="shingleton-pytest-") as tmp:
            try:
                state = {}

                def setup_stubs():
                    state["m"] = generate_stubs(args, tmp)

                def setup_corpus():
                    state["docs"] = read_corpus(args.corpus)
                    check(len(state["docs"]) > 0, "empty corpus")

                def setup_shard():
                    s = Server("shard", [args.binary, "shard", "--listen", "127.0.0.1:0",
                                         "--db", os.path.join(tmp, "shard"),
                                         "--port-file", os.path.join(tmp, "shard.port")],
                               os.path.join(tmp, "shard.port"), tmp)
                    servers.append(s)
                    state["shard"] = s.wait_ready()

                def setup_coordinator():
                    s = Server("coordinator",
                               [args.binary, "coordinator", "--listen", "127.0.0.1:0",
                                "--shards", state["shard"],
                                "--state", os.path.join(tmp, "coord"),
                                "--port-file", os.path.join(tmp, "coord.port")],
                               os.path.join(tmp, "coord.port"), tmp)
                    servers.append(s)
                    state["coord"] = s.wait_ready()

                def ingest():
                    p = subprocess.run(
                        [args.binary, "ingest", "--coordinator", state["coord"],
                         "--job", "demo", "--input", args.corpus],
                        stdin=subprocess.DEVNULL, capture_output=True, timeout=INGEST_TIMEOUT)
                    check(p.returncode == 0,
                          f"ingest exited {p.returncode}:\n"
                          + p.stdout.decode("utf-8", "replace")[-3000:]
                          + p.stderr.decode("utf-8", "replace")[-3000:])

                ok = (res.run("generate stubs (protoc + grpc_python_plugin)", setup_stubs)
                      and res.run("read corpus", setup_corpus)
                      and res.run("start shard", setup_shard)
                      and res.run("start coordinator", setup_coordinator)
                      and res.run("ingest corpus (C++ worker)", ingest))
                if ok:
                    m, docs = state["m"], state["docs"]
                    res.run("health: shard SERVING", check_health, m, state["shard"])
                    res.run("health: coordinator SERVING", check_health, m, state["coord"])
                    res.run("reflection: services listed, descriptor served",
                            check_reflection, m, state["coord"])
                    res.run("query: exact text -> own id at 1.0, sorted",
                            check_query_exact, m, state["coord"], docs)
                    res.run("query: 1 word in 200 edited -> original >= 0.8",
                            check_query_edited, m, state["coord"], docs)
                    res.run("query: unknown job -> NOT_FOUND",
                            check_unknown_job, m, state["coord"])
                    res.run("job stats: documents == corpus lines",
                            check_job_stats, m, state["coord"], docs)

                # Coordinator first, then the shard: each must exit 0 on SIGTERM.
                for s in reversed(servers):
                    def stop(s=s):
                        rc = s.terminate_and_wait()
                        check(rc is not None, f"{s.name} still running {STOP_TIMEOUT}s after "
                                              f"SIGTERM\n" + s.tail())
                        check(rc == 0, f"{s.name} exited {rc} after SIGTERM\n" + s.tail())
                    res.run(f"SIGTERM {s.name} -> exit 0", stop)
                if res.failed:
                    for s in servers:
                        print(f"---- {s.name} log (tail) ----\n{s.tail()}")
            finally:
                for s in servers:
                    s.kill()
    except Exception:  # noqa: BLE001 - e.g. temp dir cleanup failure
        res.failed += 1
        traceback.print_exc(file=sys.stdout)
    print(f"time: {time.monotonic() - t_start:.1f}s")
    print(f"{res.passed} passed, {res.failed} failed")
    return 0 if res.failed == 0 and res.passed > 0 else 1


if __name__ == "__main__":
    sys.exit(main())
