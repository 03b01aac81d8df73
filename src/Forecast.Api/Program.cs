using Forecast.Api.Auth;
using Forecast.Api.Dashboard;
using Forecast.Api.Events;
using Forecast.Api.Forecasts;
using Forecast.Api.Infrastructure;
using Forecast.Api.Keys;
using Forecast.Api.Public;
using Forecast.Api.Sequences;
using Forecast.Storage;
using Forecast.Storage.Events;
using Forecast.Storage.Keys;
using Microsoft.AspNetCore.Authentication;

var builder = WebApplication.CreateBuilder(args);
StorageDefaults.Apply();

var connectionString = builder.Configuration.GetConnectionString("Forecast")
    ?? throw new InvalidOperationException("ConnectionStrings:Forecast is not set.");

builder.Services.AddOptions<ServiceOptions>().BindConfiguration(ServiceOptions.Section)
    .ValidateDataAnnotations().ValidateOnStart();
builder.Services.AddOptions<IngestOptions>().BindConfiguration(IngestOptions.Section)
    .ValidateDataAnnotations().ValidateOnStart();
builder.Services.AddOptions<PollingOptions>().BindConfiguration(PollingOptions.Section)
    .ValidateDataAnnotations().ValidateOnStart();
builder.WebHost.ConfigureKestrel((context, kestrel) =>
    kestrel.Limits.MaxRequestBodySize = context.Configuration.GetValue(
        $"{IngestOptions.Section}:{nameof(IngestOptions.MaxBodyBytes)}", new IngestOptions().MaxBodyBytes));

builder.Services.AddProblemDetails();
builder.Services.AddBadRequestProblems();
builder.Services.AddExceptionHandler<DatabaseOutageHandler>();
builder.Services.AddSingleton(TimeProvider.System);
builder.Services.AddNpgsqlDataSource(connectionString);
builder.Services.AddSingleton<EventStore>();
builder.Services.AddSingleton<Forecast.Api.Formats.CatalogUploadSlots>();
builder.Services.AddSingleton<ApiKeyStore>();
builder.Services.AddSequencesAndForecasts();
builder.Services.AddPublicApi(builder.Configuration);
builder.Services.AddMemoryCache();
builder.Services.AddSingleton<RenderedBodies>();
builder.Services.AddSingleton<CoalescedReads>();
builder.Services.AddSingleton<ApiKeyCache>();
builder.Services.AddAuthentication(Policies.Scheme)
    .AddScheme<AuthenticationSchemeOptions, ApiKeyHandler>(Policies.Scheme, null);
Policies.Add(builder.Services.AddAuthorizationBuilder());
builder.Services.AddHealthChecks().AddNpgSql(tags: ["ready"], timeout: TimeSpan.FromSeconds(3));
builder.Services.ConfigureHttpJsonOptions(o =>
    o.SerializerOptions.Converters.Add(new System.Text.Json.Serialization.JsonStringEnumConverter()));
// A request body naming a field the endpoint does not know is refused (400), as the event ingest refuses one.
builder.Services.ConfigureHttpJsonOptions(o => o.SerializerOptions.UnmappedMemberHandling =
    System.Text.Json.Serialization.JsonUnmappedMemberHandling.Disallow);
builder.Services.AddRequestLimits();
builder.Services.AddEndpointsApiExplorer();
builder.Services.AddSwaggerGen(o =>
{
    o.SwaggerDoc("v1", new() { Title = "Forecast", Version = "v1",
        Description = "Aftershock forecasts from a live event catalog. Send API keys as 'Authorization: Bearer <key>'." });
    // Lets Swagger UI's "Authorize" send the key; public reads and health ignore it.
    o.AddSecurityDefinition("bearer", new Microsoft.OpenApi.OpenApiSecurityScheme
    {
        Type = Microsoft.OpenApi.SecuritySchemeType.Http, Scheme = "bearer",
        Description = "An API key (feeder, analyst or admin).",
    });
    o.OperationFilter<Forecast.Api.Infrastructure.ProblemResponses>();
    o.AddSecurityRequirement(document => new Microsoft.OpenApi.OpenApiSecurityRequirement
    {
        [new Microsoft.OpenApi.OpenApiSecuritySchemeReference("bearer", document)] = [],
    });
});

var app = builder.Build();

app.UseExceptionHandler();
app.UseStatusCodePages();
app.UseRequestId();
app.UseDashboard();
app.UseSwagger();
app.UseSwaggerUI(o => o.RoutePrefix = "swagger");
app.UseCors();
app.UseRateLimiter();
app.UseAuthentication();
app.UseAuthorization();
app.UseRequestTimeouts();

app.MapOperations();
app.MapEvents();
app.MapKeys();
app.MapSequences();
app.MapForecasts();
app.MapPublic();
app.MapDashboard();

await app.PrepareDatabaseAsync();
await app.RunAsync();

/// <summary>The entry point, visible to the tests' WebApplicationFactory.</summary>
public partial class Program;
