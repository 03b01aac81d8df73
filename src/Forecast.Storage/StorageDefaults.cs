namespace Forecast.Storage;

/// <summary>Process-wide Dapper settings; call once at start-up (hosts and test fixtures).</summary>
public static class StorageDefaults
{
    static int _applied;

    public static void Apply()
    {
        if (Interlocked.Exchange(ref _applied, 1) == 1) return;
        Dapper.DefaultTypeMap.MatchNamesWithUnderscores = true;
    }
}
