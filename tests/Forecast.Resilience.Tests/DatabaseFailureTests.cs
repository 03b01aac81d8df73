using System.Net.Sockets;
using Forecast.Storage.Forecasts;
using Npgsql;

namespace Forecast.Resilience.Tests;

/// <summary>Which failures count as "the database is away" (503, refit retried) and which do not (500, fit error).</summary>
public class DatabaseFailureTests
{
    [Fact]
    public void ConnectionFailuresAndTimeoutsCountAsUnavailable()
    {
        Assert.True(DatabaseFailure.IsUnavailable(new NpgsqlException("Failed to connect", new SocketException(111))));
        Assert.True(DatabaseFailure.IsUnavailable(new NpgsqlException("Exception while reading from stream", new TimeoutException())));
        Assert.True(DatabaseFailure.IsUnavailable(new InvalidOperationException("wrapped", new SocketException(104))));
    }

    [Theory]
    [InlineData(PostgresErrorCodes.AdminShutdown)]        // 57P01, a fast shutdown ends every session
    [InlineData(PostgresErrorCodes.CannotConnectNow)]     // 57P03, starting up or shutting down
    [InlineData(PostgresErrorCodes.ConnectionFailure)]    // 08006
    [InlineData(PostgresErrorCodes.TooManyConnections)]   // 53300
    public void ServerErrorsOfShutdownAndConnectionCountAsUnavailable(string sqlState) =>
        Assert.True(DatabaseFailure.IsUnavailable(new PostgresException("x", "FATAL", "FATAL", sqlState)));

    [Theory]
    [InlineData(PostgresErrorCodes.UniqueViolation)]
    [InlineData(PostgresErrorCodes.SyntaxError)]
    [InlineData(PostgresErrorCodes.DivisionByZero)]
    public void ErrorsOfTheStatementItselfDoNot(string sqlState) =>
        Assert.False(DatabaseFailure.IsUnavailable(new PostgresException("x", "ERROR", "ERROR", sqlState)));

    [Fact]
    public void OtherExceptionsDoNot()
    {
        Assert.False(DatabaseFailure.IsUnavailable(new InvalidOperationException("a bug")));
        Assert.False(DatabaseFailure.IsUnavailable(new ArgumentException("bad input")));
    }
}
