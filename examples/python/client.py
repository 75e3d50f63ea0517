#!/usr/bin/python3
"""A renyi-bound client in Python: lists the example builders, solves one problem, streams a parameter grid and
verifies a result, using nothing but the .proto files of this repository and Debian's packages.

    /usr/bin/python3 examples/python/client.py --server 127.0.0.1:50051

Needs (Debian/Ubuntu): protobuf-compiler (protoc 3.21), protobuf-compiler-grpc (/usr/bin/grpc_python_plugin),
python3-grpcio, python3-protobuf. Run it with /usr/bin/python3: a user-installed Python does not see Debian's
python3-* packages. The Python stubs are generated into a temporary directory at every run, so nothing generated
is kept in the repository and the stubs always match the .proto files next to this script.

Exit code 0 when every step succeeded and every bound passed its check; 1 otherwise.
"""

import argparse
import glob
import importlib
import math
import os
import shutil
import subprocess
import sys
import tempfile

REPOSITORY = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
PROTO_DIRECTORY = os.path.join(REPOSITORY, "proto")
GRPC_PYTHON_PLUGIN = "/usr/bin/grpc_python_plugin"

# Requested certified gap in bits.
GAP = 1e-6


def fail(message):
    sys.stderr.write("client.py: %s\n" % message)
    sys.exit(1)


def generate_stubs(output_directory):
    """protoc with Debian's gRPC plugin, for every .proto of the service (the same command as in the README)."""
    protoc = shutil.which("protoc")
    if protoc is None:
        fail("protoc not found: apt-get install protobuf-compiler")
    if not os.access(GRPC_PYTHON_PLUGIN, os.X_OK):
        fail("%s not found: apt-get install protobuf-compiler-grpc" % GRPC_PYTHON_PLUGIN)
    protos = sorted(glob.glob(os.path.join(PROTO_DIRECTORY, "renyibound", "v1", "*.proto")))
    command = [protoc, "-I", PROTO_DIRECTORY, "--python_out=" + output_directory, "--grpc_out=" + output_directory,
               "--plugin=protoc-gen-grpc=" + GRPC_PYTHON_PLUGIN] + protos
    completed = subprocess.run(command, capture_output=True, text=True)
    if completed.returncode != 0:
        fail("protoc failed: %s" % completed.stderr.strip())


def binary_entropy(p):
    return 0.0 if p <= 0 or p >= 1 else -p * math.log2(p) - (1 - p) * math.log2(1 - p)


def matrix(rows, cols, real):
    return {"rows": rows, "cols": cols, "re": real}


def bb84_problem(qber):
    """Entanglement-based BB84 on two qubits with error rate `qber` in Z and X, written out by hand:
    Tr(ρ E_Z) = Tr(ρ E_X) = qber with E_Z = (1 − Z⊗Z)/2, E_X = (1 − X⊗X)/2; key = Alice's Z outcome."""
    error_z = [0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0]
    error_x = [0.5, 0, 0, -0.5, 0, 0.5, -0.5, 0, 0, -0.5, 0.5, 0, -0.5, 0, 0, 0.5]
    identity = [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1]
    alice_zero = [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0]
    alice_one = [0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1]
    return {
        "dimensionA": 2,
        "dimensionB": 2,
        "constraints": [
            {"label": "qber-z", "operator": matrix(4, 4, error_z), "lower": qber, "upper": qber},
            {"label": "qber-x", "operator": matrix(4, 4, error_x), "lower": qber, "upper": qber},
        ],
        "branches": [{
            "label": "key",
            "krausOperators": [matrix(4, 4, identity)],
            "keyProjectors": [matrix(4, 4, alice_zero), matrix(4, 4, alice_one)],
        }],
    }


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--server", required=True, help="host:port of a running renyi-bound server")
    parser.add_argument("--timeout", type=float, default=120.0, help="seconds allowed for each call")
    parser.add_argument("--connect-timeout", type=float, default=10.0, help="seconds to wait for the server")
    arguments = parser.parse_args()

    try:
        import grpc
        from google.protobuf import json_format
    except ImportError as error:
        fail("%s (%s): install python3-grpcio and python3-protobuf and run this with /usr/bin/python3"
             % (error, sys.executable))

    with tempfile.TemporaryDirectory(prefix="renyi-bound-python-") as stubs:
        generate_stubs(stubs)
        sys.path.insert(0, stubs)
        service_pb2 = importlib.import_module("renyibound.v1.service_pb2")
        problem_pb2 = importlib.import_module("renyibound.v1.problem_pb2")
        examples_pb2 = importlib.import_module("renyibound.v1.examples_pb2")
        service_pb2_grpc = importlib.import_module("renyibound.v1.service_pb2_grpc")

        channel = grpc.insecure_channel(arguments.server)
        try:
            grpc.channel_ready_future(channel).result(timeout=arguments.connect_timeout)
        except grpc.FutureTimeoutError:
            fail("%s: no server answered within %.0f s" % (arguments.server, arguments.connect_timeout))
        stub = service_pb2_grpc.RenyiBoundStub(channel)
        ok = True

        # 1. What can a grid name? The builders with their parameters, defaults and ranges.
        listing = stub.ListExamples(examples_pb2.ListExamplesRequest(), timeout=arguments.timeout)
        for example in listing.examples:
            parameters = ", ".join("%s=%g [%g, %g]" % (p.name, p.default_value, p.minimum, p.maximum)
                                   for p in example.parameters)
            print("example %s: %s" % (example.name, parameters))
        if "bb84-entangled" not in [example.name for example in listing.examples]:
            fail("ListExamples does not list bb84-entangled")

        # 2. One problem, written by hand. Shor & Preskill (PRL 85, 441, 2000): the minimum is 1 − h(Q).
        qber = 0.05
        request = json_format.ParseDict({
            "problem": bb84_problem(qber),
            "entropy": "VON_NEUMANN",
            "settings": {"gapTolerance": GAP},
            "requestId": "python-client",
        }, service_pb2.SolveRequest())
        reply = stub.Solve(request, timeout=arguments.timeout)
        result = reply.result
        expected = 1 - binary_entropy(qber)
        status = service_pb2.SolveStatus.Name(result.status)
        bound = result.certified_lower_bound if result.HasField("certified_lower_bound") else None
        print("solve: status %s, certified lower bound %s, gap %g (Shor-Preskill 1 - h(%g) = %.9f)"
              % (status, bound, result.gap, qber, expected))
        if status != "CERTIFIED" or bound is None or not (expected - GAP - 1e-9 <= bound <= expected + 1e-9):
            print("  FAILED: expected a CERTIFIED bound within %g below %.9f" % (GAP, expected))
            ok = False

        # 3. A grid over the X error rate, streamed as points finish. The phase error sets the rate:
        #    H(Z|E) = 1 − h(Q_X) for this problem (Shor & Preskill 2000), whatever Q_Z is.
        grid = json_format.ParseDict({
            "grid": {
                "example": "bb84-entangled",
                "baseParameters": {"qber-z": 0.02, "alpha": 1.5},
                "axes": [{"name": "qber-x", "values": [0.01, 0.03, 0.05, 0.08]}],
                "entropies": ["VON_NEUMANN", "PETZ_UP"],
                "settings": {"gapTolerance": GAP},
            },
            "requestId": "python-client-grid",
        }, service_pb2.BatchRequest())
        points = 0
        for item in stub.SolveBatch(grid, timeout=arguments.timeout):
            points += 1
            kind = problem_pb2.EntropyKind.Name(item.entropy)
            where = ", ".join("%s=%g" % (name, value) for name, value in sorted(item.point.items()))
            if item.error_message:
                print("  point %d (%s, %s): error at %s: %s" % (item.index, where, kind, item.error_field,
                                                               item.error_message))
                ok = False
                continue
            point_bound = item.result.certified_lower_bound
            ceiling = 1 - binary_entropy(item.point["qber-x"])
            print("  point %d (%s, %s): %s, bound %.6f  [%d/%d done]"
                  % (item.index, where, kind, service_pb2.SolveStatus.Name(item.result.status), point_bound,
                     item.progress.done, item.progress.total))
            # Every Rényi kind here lies at or below von Neumann, which is at most 1 − h(Q_X).
            if point_bound > ceiling + 1e-9:
                print("    FAILED: above 1 - h(qber-x) = %.9f" % ceiling)
                ok = False
        if points != 8:
            print("grid: FAILED: %d points streamed, expected 8" % points)
            ok = False

        # 4. Verify the result of step 2 against its problem (no optimisation on the server).
        verdict = stub.Verify(service_pb2.VerifyRequest(problem=request.problem, entropy=request.entropy,
                                                        result=result), timeout=arguments.timeout)
        print("verify: valid %s, recomputed bound %s (%s)"
              % (verdict.valid, verdict.certified_lower_bound, verdict.reason))
        if not verdict.valid:
            ok = False
        channel.close()

    print("python client: %s" % ("all checks passed" if ok else "some checks FAILED"))
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
