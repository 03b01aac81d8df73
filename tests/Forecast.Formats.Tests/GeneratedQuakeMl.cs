using System.Globalization;
using System.Text;

namespace Forecast.Formats.Tests;

/// <summary>A QuakeML 1.2 document of <c>count</c> invented events, generated as it is read: the test of
/// streaming never has the document in memory.</summary>
sealed class GeneratedQuakeMl(int count) : Stream
{
    byte[] _chunk = Encoding.UTF8.GetBytes(Documents.Head + "\n");
    int _at;
    int _next;
    bool _ended;

    public static string EventText(int i) => string.Create(CultureInfo.InvariantCulture, $"""
            <event publicID="smi:zz/event/{i}">
              <preferredOriginID>smi:zz/origin/{i}</preferredOriginID>
              <preferredMagnitudeID>smi:zz/magnitude/{i}</preferredMagnitudeID>
              <creationInfo><agencyID>zz</agencyID></creationInfo>
              <origin publicID="smi:zz/origin/{i}">
                <time><value>2026-01-10T03:{i / 1_000_000 % 60:00}:{i / 10_000 % 60:00}.{i % 10_000:000000}Z</value></time>
                <latitude><value>{10 + i % 1000 * 0.001:0.###}</value></latitude>
                <longitude><value>{-20 - i % 700 * 0.001:0.###}</value></longitude>
                <depth><value>{5000 + i % 300 * 10}</value></depth>
                <evaluationMode>automatic</evaluationMode>
              </origin>
              <magnitude publicID="smi:zz/magnitude/{i}">
                <mag><value>{1 + i % 40 * 0.1:0.0}</value></mag>
                <type>ML</type>
              </magnitude>
            </event>

        """);

    public override int Read(byte[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

    public override int Read(Span<byte> buffer)
    {
        while (_at == _chunk.Length)
        {
            if (_ended) return 0;
            if (_next < count) _chunk = Encoding.UTF8.GetBytes(EventText(_next++));
            else
            {
                _chunk = Encoding.UTF8.GetBytes(Documents.Tail);
                _ended = true;
            }
            _at = 0;
        }
        var n = Math.Min(buffer.Length, _chunk.Length - _at);
        _chunk.AsSpan(_at, n).CopyTo(buffer);
        _at += n;
        return n;
    }

    public override bool CanRead => true;
    public override bool CanSeek => false;
    public override bool CanWrite => false;
    public override long Length => throw new NotSupportedException();
    public override long Position { get => throw new NotSupportedException(); set => throw new NotSupportedException(); }
    public override void Flush() { }
    public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();
    public override void SetLength(long value) => throw new NotSupportedException();
    public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
}
