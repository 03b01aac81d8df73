using System.ComponentModel.DataAnnotations;

namespace Forecast.Api.Infrastructure;

/// <summary>Section <c>Forecast</c>: start-up behaviour.</summary>
public sealed class ServiceOptions
{
    public const string Section = "Forecast";

    /// <summary>Apply pending migrations at start-up (otherwise run <c>forecast migrate</c>).</summary>
    public bool MigrateOnStart { get; init; } = true;

    /// <summary>When set and no active admin key exists, this key is registered as admin.</summary>
    [MinLength(32, ErrorMessage = "Forecast:BootstrapAdminKey must be at least 32 characters long.")]
    public string? BootstrapAdminKey { get; init; }
}

/// <summary>Section <c>Ingest</c>: limits on event submissions.</summary>
public sealed class IngestOptions
{
    public const string Section = "Ingest";

    [Range(1, 1_000_000)] public int MaxEventsPerPost { get; init; } = 200_000;

    /// <summary>Largest request body accepted anywhere, in bytes (100,000 JSON events take about 20 MB).</summary>
    [Range(1_024, 1L << 31)] public long MaxBodyBytes { get; init; } = 64L * 1024 * 1024;

    /// <summary>Largest QuakeML or FDSN text body of <c>POST /v1/events</c>, in bytes. These are read event by
    /// event from a temporary file, so memory does not grow with them (100,000 QuakeML events take about
    /// 110 MB, in FDSN text 15 MB).</summary>
    [Range(1_024, 1L << 34)] public long MaxCatalogBodyBytes { get; init; } = 512L * 1024 * 1024;

    /// <summary>QuakeML and FDSN text uploads staged at once. Each holds a database connection and an open
    /// transaction while its body arrives, so a few slow senders must not take the whole pool; one more is
    /// answered 503 with Retry-After.</summary>
    [Range(1, 64)] public int MaxConcurrentCatalogUploads { get; init; } = 4;
}

/// <summary>Section <c>Polling</c>: how the reads that dashboards repeat are shared.</summary>
public sealed class PollingOptions
{
    public const string Section = "Polling";

    /// <summary>How long the answer of a polled read (which forecast is the latest, the feed's list) is reused by
    /// later callers: answers are at most this much older than the request. Zero reads for every request (still
    /// coalescing concurrent ones). Changes made through this process are seen at once whatever the setting.</summary>
    [Range(typeof(TimeSpan), "00:00:00", "00:00:05")] public TimeSpan ReadReuse { get; init; } = TimeSpan.FromMilliseconds(200);

    /// <summary>After <see cref="ReadReuse"/>, for this long more, callers still get the last answer at once while
    /// one read refreshes it in the background, so a slow database does not hold every poller behind that read:
    /// answers are then at most <see cref="ReadReuse"/> + this older than the request. Zero makes callers past
    /// <see cref="ReadReuse"/> wait for a fresh read. No effect when <see cref="ReadReuse"/> is zero.</summary>
    [Range(typeof(TimeSpan), "00:00:00", "00:00:05")] public TimeSpan RefreshWithin { get; init; } = TimeSpan.FromSeconds(1);
}
