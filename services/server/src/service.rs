//! The `binodal.v1.PhaseService` implementation.
//!
//! The handlers record the requested fluid on the request span and, in this phase, answer
//! UNIMPLEMENTED; phase 2 wires them to the engine through [`crate::convert`] and
//! [`crate::status`].

use binodal_proto::v1::phase_service_server::PhaseService;
use binodal_proto::v1::{
    DescribeFluidRequest, DescribeFluidResponse, GetSaturationRequest, GetSaturationResponse,
    GetStateBatchRequest, GetStateBatchResponse, GetStateRequest, GetStateResponse,
    ListFluidsRequest, ListFluidsResponse,
};
use tonic::{Request, Response, Status};

use crate::telemetry::{record_fluid, record_fluid_name};

/// The phase-state service handlers.
#[derive(Debug, Default)]
pub struct PhaseApi {}

/// The answer of every RPC until phase 2 wires it to the engine.
fn not_wired() -> Status {
    Status::unimplemented("phase 2")
}

#[tonic::async_trait]
impl PhaseService for PhaseApi {
    async fn list_fluids(
        &self,
        _request: Request<ListFluidsRequest>,
    ) -> Result<Response<ListFluidsResponse>, Status> {
        Err(not_wired())
    }

    async fn describe_fluid(
        &self,
        request: Request<DescribeFluidRequest>,
    ) -> Result<Response<DescribeFluidResponse>, Status> {
        record_fluid_name(&request.get_ref().fluid);
        Err(not_wired())
    }

    async fn get_saturation(
        &self,
        request: Request<GetSaturationRequest>,
    ) -> Result<Response<GetSaturationResponse>, Status> {
        record_fluid(request.get_ref().fluid.as_ref());
        Err(not_wired())
    }

    async fn get_state(
        &self,
        request: Request<GetStateRequest>,
    ) -> Result<Response<GetStateResponse>, Status> {
        record_fluid(request.get_ref().fluid.as_ref());
        Err(not_wired())
    }

    async fn get_state_batch(
        &self,
        request: Request<GetStateBatchRequest>,
    ) -> Result<Response<GetStateBatchResponse>, Status> {
        record_fluid(request.get_ref().fluid.as_ref());
        Err(not_wired())
    }
}
