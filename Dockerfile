# Tieflow container images, built from this repository in two stages:
#   docker build --target monitor   -t tieflow:local .      (the monitor, `tieflow`)
#   docker build --target simulator -t tieflow-sim:local .  (the simulated plant, `tieflow-sim`)
# docker-compose.yml builds both and runs them with InfluxDB. Tieflow is advisory and read-only towards the plant;
# it is not a safety system.

# ---- build: restore and publish both executables (framework-dependent, linux-x64, ReadyToRun: less JIT at start) ----
FROM mcr.microsoft.com/dotnet/sdk:10.0 AS build
WORKDIR /src
ENV DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1
# The project files first, so that the restore layer is reused while only sources change.
COPY global.json Directory.Build.props Directory.Packages.props .editorconfig ./
COPY eng/ eng/
COPY src/Tieflow.Core/Tieflow.Core.csproj src/Tieflow.Core/
COPY src/Tieflow.Files/Tieflow.Files.csproj src/Tieflow.Files/
COPY src/Tieflow.OpcUa/Tieflow.OpcUa.csproj src/Tieflow.OpcUa/
COPY src/Tieflow.Storage/Tieflow.Storage.csproj src/Tieflow.Storage/
COPY src/Tieflow.Service/Tieflow.Service.csproj src/Tieflow.Service/
COPY simulator/Tieflow.Simulator/Tieflow.Simulator.csproj simulator/Tieflow.Simulator/
# The restore takes the publish's settings, so that it also fetches the ReadyToRun compiler (crossgen2) for linux-x64.
RUN dotnet restore src/Tieflow.Service/Tieflow.Service.csproj -r linux-x64 -p:PublishReadyToRun=true \
 && dotnet restore simulator/Tieflow.Simulator/Tieflow.Simulator.csproj -r linux-x64 -p:PublishReadyToRun=true
COPY src/ src/
COPY simulator/ simulator/
COPY schemas/ schemas/
# The samples too: the demo configuration may be built into the executables.
COPY config-samples/ config-samples/
RUN dotnet publish src/Tieflow.Service/Tieflow.Service.csproj -c Release -r linux-x64 --self-contained false -p:PublishReadyToRun=true --no-restore -o /out/tieflow \
 && dotnet publish simulator/Tieflow.Simulator/Tieflow.Simulator.csproj -c Release -r linux-x64 --self-contained false -p:PublishReadyToRun=true --no-restore -o /out/tieflow-sim

# ---- monitor: `tieflow run`, configured through TIEFLOW__... environment variables ----
FROM mcr.microsoft.com/dotnet/runtime:10.0 AS monitor
WORKDIR /app
COPY --from=build /out/tieflow/ /app/
COPY config-samples/ /app/config-samples/
# /data holds the OPC UA certificate store, the store's outbox and the lab drop folder; the image's user owns it.
RUN mkdir -p /data && chown "$APP_UID" /data
USER $APP_UID
# A 4 MiB young-generation budget keeps resident memory near 95 MB with 512 tags (docs/service.md#memory).
ENV DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_GCgen0size=0x400000
VOLUME ["/data"]
ENTRYPOINT ["/app/tieflow"]
CMD ["run"]

# ---- simulator: `tieflow-sim run --serve`, a simulated plant serving its instruments over OPC UA ----
FROM mcr.microsoft.com/dotnet/runtime:10.0 AS simulator
WORKDIR /app
COPY --from=build /out/tieflow-sim/ /app/
COPY config-samples/ /app/config-samples/
USER $APP_UID
EXPOSE 4840
ENTRYPOINT ["/app/tieflow-sim"]
CMD ["run", "--scenario", "/app/config-samples/scenarios/clean.scenario.json", "--serve", "opc.tcp://0.0.0.0:4840", "--speed", "1"]
