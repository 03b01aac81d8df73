using System.Net.Sockets;
using System.Text;

namespace Forecast.Cli;

/// <summary>One kept-alive HTTP/1.1 connection that sends prepared GET requests and reads whole answers
/// (RFC 9112: a Content-Length body, or a chunked one), for <c>forecast bench-poll</c>.</summary>
/// <remarks>A load generator on the machine it measures takes cores from the service: HttpClient spent about
/// 110 µs of CPU per polled request here, a fifth of the two cores at 3,600 requests/s. This reads answers into one
/// buffer and keeps nothing of them but their status and length. It is for measuring this service, not a general
/// client: no TLS, no redirects, no HTTP/2.</remarks>
sealed class PollConnection(string host, int port) : IDisposable
{
    Socket? _socket;
    readonly byte[] _buffer = new byte[64 * 1024];
    int _start, _end;

    /// <summary>The request bytes of a GET of <paramref name="path"/>, with an Authorization header when given.
    /// </summary>
    public static byte[] Request(Uri baseAddress, string path, string? bearer) => Encoding.ASCII.GetBytes(
        $"GET {path} HTTP/1.1\r\nHost: {baseAddress.Authority}\r\n" +
        (bearer is null ? "" : $"Authorization: Bearer {bearer}\r\n") + "Accept: */*\r\n\r\n");

    /// <summary>Sends the request and reads the whole answer; returns its status and the length of its body.
    /// </summary>
    public async Task<(int Status, long BodyBytes)> GetAsync(byte[] request, CancellationToken ct)
    {
        try
        {
            if (_socket is null)
            {
                _socket = new Socket(SocketType.Stream, ProtocolType.Tcp) { NoDelay = true };
                await _socket.ConnectAsync(host, port, ct);
                _start = _end = 0;
            }
            await _socket.SendAsync(request, SocketFlags.None, ct);
            return await ReadAnswerAsync(ct);
        }
        catch
        {
            Close();   // the next request opens a new connection
            throw;
        }
    }

    async Task<(int, long)> ReadAnswerAsync(CancellationToken ct)
    {
        while (true)
        {
            var (status, body) = await ReadOneAnswerAsync(ct);
            if (status >= 200) return (status, body);   // 1xx answers are interim (RFC 9110, 15.2)
        }
    }

    async Task<(int, long)> ReadOneAnswerAsync(CancellationToken ct)
    {
        int headEnd;
        while ((headEnd = _buffer.AsSpan(_start, _end - _start).IndexOf("\r\n\r\n"u8)) < 0) await FillAsync(ct);
        var head = Encoding.ASCII.GetString(_buffer, _start, headEnd);
        _start += headEnd + 4;

        var lines = head.Split("\r\n");
        var statusLine = lines[0].Split(' ', 3);
        if (statusLine.Length < 2 || !statusLine[0].StartsWith("HTTP/1.", StringComparison.Ordinal)
            || !int.TryParse(statusLine[1], out var status))
        {
            throw new HttpRequestException($"not an HTTP/1.x status line: {lines[0]}");
        }
        long? length = null;
        bool chunked = false, close = false;
        foreach (var line in lines.AsSpan(1))
        {
            var colon = line.IndexOf(':');
            if (colon <= 0) continue;
            var name = line.AsSpan(0, colon).Trim();
            var value = line.AsSpan(colon + 1).Trim();
            if (name.Equals("Content-Length", StringComparison.OrdinalIgnoreCase))
                length = long.TryParse(value, out var n) && n >= 0 ? n : throw new HttpRequestException($"a bad Content-Length: {line}");
            else if (name.Equals("Transfer-Encoding", StringComparison.OrdinalIgnoreCase))
                chunked = value.Contains("chunked", StringComparison.OrdinalIgnoreCase);
            else if (name.Equals("Connection", StringComparison.OrdinalIgnoreCase))
                close = value.Contains("close", StringComparison.OrdinalIgnoreCase);
        }

        long body = 0;
        if (status is < 200 or 204 or 304)
        {
            // no body, whatever the headers say (RFC 9112, 6.3)
        }
        else if (chunked)
        {
            while (true)
            {
                var sizeText = (await ReadLineAsync(ct)).Split(';')[0].Trim();
                if (!long.TryParse(sizeText, System.Globalization.NumberStyles.AllowHexSpecifier, null, out var size) || size < 0)
                    throw new HttpRequestException($"a bad chunk size: {sizeText}");
                if (size == 0)
                {
                    while ((await ReadLineAsync(ct)).Length > 0) { }   // trailer fields, then the empty line
                    break;
                }
                await SkipAsync(size, ct);
                body += size;
                await ReadLineAsync(ct);   // the CRLF after the chunk
            }
        }
        else if (length is { } n)
        {
            await SkipAsync(n, ct);
            body = n;
        }
        else
        {
            throw new HttpRequestException("an answer without Content-Length or chunked encoding");
        }
        if (close) Close();
        return (status, body);
    }

    async Task<string> ReadLineAsync(CancellationToken ct)
    {
        int eol;
        while ((eol = _buffer.AsSpan(_start, _end - _start).IndexOf("\r\n"u8)) < 0) await FillAsync(ct);
        var line = Encoding.ASCII.GetString(_buffer, _start, eol);
        _start += eol + 2;
        return line;
    }

    async Task SkipAsync(long count, CancellationToken ct)
    {
        while (count > 0)
        {
            if (_start == _end) await FillAsync(ct);
            var take = (int)Math.Min(count, _end - _start);
            _start += take;
            count -= take;
        }
    }

    /// <summary>Reads more of the answer after what is buffered.</summary>
    async Task FillAsync(CancellationToken ct)
    {
        if (_start == _end) _start = _end = 0;
        else if (_end == _buffer.Length)
        {
            if (_start == 0) throw new HttpRequestException("an answer's header is longer than the read buffer");
            Buffer.BlockCopy(_buffer, _start, _buffer, 0, _end - _start);
            _end -= _start;
            _start = 0;
        }
        var n = await _socket!.ReceiveAsync(_buffer.AsMemory(_end), SocketFlags.None, ct);
        if (n == 0) throw new HttpRequestException("the server closed the connection during an answer");
        _end += n;
    }

    void Close()
    {
        _socket?.Dispose();
        _socket = null;
    }

    public void Dispose() => Close();
}
