# Multi-stage build of the PanelRound web service (the production path, with PostgreSQL).
FROM mcr.microsoft.com/dotnet/sdk:10.0 AS build
WORKDIR /src
COPY global.json Directory.Build.props Directory.Packages.props .editorconfig PanelRound.sln ./
COPY src/ src/
COPY migrations/ migrations/
RUN dotnet publish src/PanelRound.Web/PanelRound.Web.csproj -c Release -o /app/publish

FROM mcr.microsoft.com/dotnet/aspnet:10.0 AS runtime
WORKDIR /app
COPY --from=build /app/publish .
# The demo scenario travels with the image; it loads only when Demo__Enabled=true, and never in
# Production (its links and passwords are public): set ASPNETCORE_ENVIRONMENT=Staging for a demo container.
COPY demo-data/ /app/demo-data/
ENV ASPNETCORE_URLS=http://+:8080 \
    Database__Provider=Postgres \
    Demo__Folder=/app/demo-data
EXPOSE 8080
USER $APP_UID
ENTRYPOINT ["dotnet", "PanelRound.Web.dll"]
