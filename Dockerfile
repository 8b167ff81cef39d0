# syntax=docker/dockerfile:1
# PathService container: the gRPC server (port 5180, HTTP/2 cleartext) and its HTTP/1.1 port (5181: JSON
# transcoding and the Prometheus scrape). Build from the repository root:
#   docker build -t pathservice:dev .
#   docker run --rm -p 5180:5180 -p 5181:5181 pathservice:dev
# Configuration is by environment variable (PathService__GrpcPort, PathService__Limits__MaxConcurrentAnalyses, ...);
# see docs/operations.md for every setting.

ARG DOTNET_VERSION=10.0

# ---- build: restore with only the project files first, so that the package layer survives source edits ----
FROM mcr.microsoft.com/dotnet/sdk:${DOTNET_VERSION} AS build
WORKDIR /src
ENV DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1
COPY Directory.Build.props Directory.Packages.props ./
COPY src/PathService.Engine/PathService.Engine.csproj src/PathService.Engine/
COPY src/PathService.Client/PathService.Client.csproj src/PathService.Client/
COPY src/PathService.Contracts/PathService.Contracts.csproj src/PathService.Contracts/
COPY src/PathService.Ifc/PathService.Ifc.csproj src/PathService.Ifc/
COPY src/PathService.Application/PathService.Application.csproj src/PathService.Application/
COPY src/PathService.Server/PathService.Server.csproj src/PathService.Server/
COPY deploy/probe/PathService.Probe.csproj deploy/probe/
RUN dotnet restore src/PathService.Server/PathService.Server.csproj \
 && dotnet restore deploy/probe/PathService.Probe.csproj
COPY protos/ protos/
COPY src/PathService.Engine/ src/PathService.Engine/
COPY src/PathService.Client/ src/PathService.Client/
COPY src/PathService.Contracts/ src/PathService.Contracts/
COPY src/PathService.Ifc/ src/PathService.Ifc/
COPY src/PathService.Application/ src/PathService.Application/
COPY src/PathService.Server/ src/PathService.Server/
COPY deploy/probe/ deploy/probe/
RUN dotnet publish src/PathService.Server/PathService.Server.csproj -c Release --no-restore -o /app/server -p:UseAppHost=false \
 && dotnet publish deploy/probe/PathService.Probe.csproj -c Release --no-restore -o /app/probe -p:UseAppHost=false

# ---- runtime: ASP.NET Core runtime only, non-root ----
FROM mcr.microsoft.com/dotnet/aspnet:${DOTNET_VERSION} AS runtime
WORKDIR /app
COPY --from=build /app/server ./server/
COPY --from=build /app/probe ./probe/
# The server binds its own two endpoints (PathService:ListenAddress/GrpcPort/HttpPort); the image's default
# ASPNETCORE_HTTP_PORTS=8080 would only be overridden with a warning, so it is cleared.
ENV ASPNETCORE_HTTP_PORTS= \
    DOTNET_CLI_TELEMETRY_OPTOUT=1 \
    PathService__ListenAddress=0.0.0.0 \
    PathService__GrpcPort=5180 \
    PathService__HttpPort=5181 \
    PathService__Telemetry__PrometheusPath=/metrics \
    PathService__Telemetry__ServiceName=pathservice
EXPOSE 5180 5181
# 1654 is the base image's unprivileged "app" user ($APP_UID); numeric so that Kubernetes can verify runAsNonRoot.
USER 1654:1654
# No curl in this image: pathservice-probe (built above, ~1 MB) asks the server's grpc.health.v1.Health service for the
# analysis service, the same check the Kubernetes readiness probe makes, and exits 0 only when it is SERVING.
HEALTHCHECK --interval=15s --timeout=5s --start-period=20s --retries=3 \
  CMD ["dotnet", "/app/probe/pathservice-probe.dll", "--service", "pathservice.v1.StructuralPathService"]
ENTRYPOINT ["dotnet", "/app/server/PathService.Server.dll"]
