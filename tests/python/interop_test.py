#!/usr/bin/env python3
"""Interoperability check of the binodal gRPC service with a client nobody here wrote.

The client stubs are generated at run time from proto/ with the gRPC project's own
``grpc_tools.protoc`` (packages in tests/python/requirements.txt) into a temporary directory.
The script starts nothing: it talks to a server that is already running, at the address given
as the first argument or in the BINODAL_ADDRESS environment variable (``host:port``).

Exit status: 0 when every check passes, 1 when a check fails, 2 when the set-up is missing
(no address, packages not installed, stubs not generated).

Results of the service are advisory; they defer to local codes and licensed practice.
"""

import math
import os
import sys
import tempfile

REPO = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
PROTO_DIR = os.path.join(REPO, "proto")
PROTO_FILES = ["binodal/v1/fluids.proto", "binodal/v1/phase.proto", "binodal/v1/service.proto"]
CALL_TIMEOUT_S = 20.0
PHASE_SERVICE = "binodal.v1.PhaseService"

# Allowance, in percentage points, over a recorded deviation: the recorded figures are written
# with three decimals (crates/fluids/data/accuracy.toml), so 0.001 covers their rounding.
RECORD_ROUNDING_PERCENT = 0.001


def setup_failure(message):
    print(f"interop: SET-UP FAILED: {message}", file=sys.stderr)
    sys.exit(2)


try:
    import grpc
    from grpc_health.v1 import health_pb2, health_pb2_grpc
    from grpc_tools import protoc
except ImportError as error:
    setup_failure(
        f"{error}. Install the client packages with "
        "`python3 -m pip install -r tests/python/requirements.txt`."
    )


def generate_stubs(out_dir):
    """Generates the Python message and service modules from proto/ into out_dir."""
    import grpc_tools

    well_known = os.path.join(os.path.dirname(grpc_tools.__file__), "_proto")
    args = [
        "grpc_tools.protoc",
        f"-I{PROTO_DIR}",
        f"-I{well_known}",
        f"--python_out={out_dir}",
        f"--grpc_python_out={out_dir}",
    ] + PROTO_FILES
    if protoc.main(args) != 0:
        setup_failure(f"grpc_tools.protoc could not compile {PROTO_FILES} from {PROTO_DIR}")
    sys.path.insert(0, out_dir)


class Checks:
    """Collects failed checks so that one run reports all of them."""

    def __init__(self):
        self.failures = []
        self.passed = 0

    def check(self, condition, what):
        if condition:
            self.passed += 1
            print(f"ok   {what}")
        else:
            self.failures.append(what)
            print(f"FAIL {what}")


def deviation_percent(value, reference):
    return 100.0 * abs(value - reference) / abs(reference)


def run(address, checks):
    from binodal.v1 import fluids_pb2, phase_pb2, service_pb2_grpc

    channel = grpc.insecure_channel(address)
    grpc.channel_ready_future(channel).result(timeout=CALL_TIMEOUT_S)

    # Health: the standard grpc.health.v1 service reports the phase service SERVING.
    health = health_pb2_grpc.HealthStub(channel)
    reply = health.Check(health_pb2.HealthCheckRequest(service=PHASE_SERVICE), timeout=CALL_TIMEOUT_S)
    checks.check(reply.status == health_pb2.HealthCheckResponse.SERVING, "health: phase service SERVING")

    stub = service_pb2_grpc.PhaseServiceStub(channel)

    def selector(name):
        return fluids_pb2.FluidSelector(fluid=name)

    def basis_ok(basis, fluid_id, label):
        checks.check(basis.fluid_id == fluid_id, f"{label}: basis names {fluid_id}")
        checks.check(
            basis.equation_of_state != fluids_pb2.EQUATION_OF_STATE_UNSPECIFIED,
            f"{label}: basis names the equation of state",
        )
        checks.check(basis.HasField("expected_deviation"), f"{label}: basis carries the expected deviation")
        checks.check("advisory" in basis.caution, f"{label}: caution says results are advisory")

    # ListFluids by safety class: R-290 propane and R-600a isobutane are A3 (ASHRAE Standard 34,
    # as recorded in the catalogue, marked there `from memory`); R-134a is A1.
    listed = stub.ListFluids(
        fluids_pb2.ListFluidsRequest(safety_classes=[fluids_pb2.SAFETY_CLASS_A3]), timeout=CALL_TIMEOUT_S
    )
    ids = {f.fluid_id for f in listed.fluids}
    checks.check({"propane", "isobutane"} <= ids, f"ListFluids A3 has propane and isobutane: {sorted(ids)}")
    checks.check("r134a" not in ids, "ListFluids A3 leaves out R-134a")
    checks.check(
        all(f.safety_class == fluids_pb2.SAFETY_CLASS_A3 for f in listed.fluids), "ListFluids A3: every entry is A3"
    )

    # GetSaturation against published values, within the deviation the server reports.
    published = [
        # NIST Chemistry WebBook, SRD 69, propane saturation table
        # (crates/fluids/data/reference/propane_saturation.csv): 280 K, 0.58173 MPa,
        # hvap = 582.60 - 217.38 = 365.22 kJ/kg.
        ("propane", 280.0, 0.58173e6, 365.22e3),
        # NIST Chemistry WebBook, SRD 69 (IAPWS-95), water saturation table
        # (crates/fluids/data/reference/water_saturation.csv): 100 °C, 1.0145 bar, hvap 2256.4 kJ/kg.
        ("water", 373.15, 1.0145e5, 2256.4e3),
    ]
    for name, t, p_ref, hvap_ref in published:
        sat = stub.GetSaturation(
            phase_pb2.GetSaturationRequest(fluid=selector(name), temperature_k=t), timeout=CALL_TIMEOUT_S
        )
        label = f"GetSaturation {name} {t} K"
        basis_ok(sat.basis, name, label)
        accuracy = sat.basis.expected_deviation
        dp = deviation_percent(sat.saturation_pressure_pa, p_ref)
        allowed = accuracy.saturation_pressure_max_abs_deviation_percent + RECORD_ROUNDING_PERCENT
        checks.check(dp <= allowed, f"{label}: {sat.saturation_pressure_pa:.1f} Pa is {dp:.3f} % from {p_ref} Pa (max {allowed:.3f} %)")
        dh = deviation_percent(sat.enthalpy_of_vaporization_j_per_kg, hvap_ref)
        allowed = accuracy.enthalpy_of_vaporization_max_abs_deviation_percent + RECORD_ROUNDING_PERCENT
        checks.check(dh <= allowed, f"{label}: hvap {sat.enthalpy_of_vaporization_j_per_kg:.0f} J/kg is {dh:.3f} % from {hvap_ref} (max {allowed:.3f} %)")
        checks.check(
            sat.liquid.properties.density_kg_per_m3 > sat.vapor.properties.density_kg_per_m3,
            f"{label}: liquid denser than vapor",
        )

    # GetState: propane at 280 K boils at 0.58173 MPa (as above), so 1 MPa is liquid and
    # 0.2 MPa vapor; its saturation-pressure margin is the GetSaturation answer.
    sat280 = stub.GetSaturation(
        phase_pb2.GetSaturationRequest(fluid=selector("R-290"), temperature_k=280.0), timeout=CALL_TIMEOUT_S
    )
    points = [(280.0, 1.0e6, phase_pb2.PHASE_SUBCOOLED_LIQUID), (280.0, 0.2e6, phase_pb2.PHASE_SUPERHEATED_VAPOR),
              (400.0, 6.0e6, phase_pb2.PHASE_SUPERCRITICAL_FLUID)]
    singles = []
    for t, p, phase in points:
        state = stub.GetState(
            phase_pb2.GetStateRequest(fluid=selector("R-290"), temperature_k=t, pressure_pa=p), timeout=CALL_TIMEOUT_S
        )
        singles.append(state)
        label = f"GetState propane {t} K {p} Pa"
        basis_ok(state.basis, "propane", label)
        checks.check(state.phase == phase, f"{label}: phase {phase_pb2.Phase.Name(state.phase)}")
        if t == 280.0:
            checks.check(
                state.margins.saturation_pressure_pa == sat280.saturation_pressure_pa,
                f"{label}: saturation margin equals GetSaturation",
            )

    # GetStateBatch agrees point by point with GetState, and a NaN point fails alone.
    batch = stub.GetStateBatch(
        phase_pb2.GetStateBatchRequest(
            fluid=selector("R-290"),
            temperatures_k=[t for t, _, _ in points] + [math.nan],
            pressures_pa=[p for _, p, _ in points] + [1.0e5],
        ),
        timeout=CALL_TIMEOUT_S,
    )
    basis_ok(batch.basis, "propane", "GetStateBatch")
    for i, single in enumerate(singles):
        checks.check(batch.phases[i] == single.phase, f"GetStateBatch point {i}: phase as GetState")
        checks.check(
            batch.densities_kg_per_m3[i] == single.properties.density_kg_per_m3,
            f"GetStateBatch point {i}: density as GetState",
        )
        checks.check(
            batch.enthalpies_j_per_kg[i] == single.properties.enthalpy_j_per_kg,
            f"GetStateBatch point {i}: enthalpy as GetState",
        )
    checks.check(
        [(e.index, e.code) for e in batch.errors] == [(3, phase_pb2.POINT_ERROR_CODE_INVALID_INPUT)],
        f"GetStateBatch: only the NaN point fails: {[(e.index, e.code, e.message) for e in batch.errors]}",
    )
    checks.check(math.isnan(batch.densities_kg_per_m3[3]), "GetStateBatch: failed point has NaN density")

    # A bad request gets INVALID_ARGUMENT naming the field, through this client too.
    try:
        stub.GetState(
            phase_pb2.GetStateRequest(fluid=selector("propane"), temperature_k=math.nan, pressure_pa=1.0e5),
            timeout=CALL_TIMEOUT_S,
        )
        checks.check(False, "GetState with NaN temperature is refused")
    except grpc.RpcError as error:
        checks.check(error.code() == grpc.StatusCode.INVALID_ARGUMENT, f"NaN temperature: {error.code()}")
        checks.check("temperature_k" in error.details(), f"NaN temperature names the field: {error.details()}")
    try:
        stub.DescribeFluid(fluids_pb2.DescribeFluidRequest(fluid="R-134"), timeout=CALL_TIMEOUT_S)
        checks.check(False, "DescribeFluid R-134 is refused")
    except grpc.RpcError as error:
        checks.check(error.code() == grpc.StatusCode.NOT_FOUND, f"unknown fluid: {error.code()}")
        checks.check("R-134a" in error.details(), f"unknown fluid suggests R-134a: {error.details()}")
    channel.close()


def main():
    address = sys.argv[1] if len(sys.argv) > 1 else os.environ.get("BINODAL_ADDRESS", "")
    if not address:
        setup_failure("give the server address (host:port) as the first argument or in BINODAL_ADDRESS")
    checks = Checks()
    with tempfile.TemporaryDirectory(prefix="binodal-stubs-") as out_dir:
        generate_stubs(out_dir)
        try:
            run(address, checks)
        except grpc.RpcError as error:
            checks.check(False, f"unexpected RPC failure: {error.code()} {error.details()}")
        except grpc.FutureTimeoutError:
            checks.check(False, f"no server answered at {address} within {CALL_TIMEOUT_S} s")
    if checks.failures:
        print(f"interop: {len(checks.failures)} check(s) failed, {checks.passed} passed", file=sys.stderr)
        for failure in checks.failures:
            print(f"  - {failure}", file=sys.stderr)
        return 1
    print(f"interop: all checks passed ({checks.passed})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
