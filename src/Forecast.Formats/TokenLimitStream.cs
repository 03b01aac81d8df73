namespace Forecast.Formats;

/// <summary>A read-only stream that fails once more than <c>maxRunBytes</c> bytes pass without one of the
/// delimiter bytes: the longest tag or text run of XML ('&lt;', '&gt;'), the longest line of text ('\n').</summary>
/// <remarks>XmlReader has no limit on one attribute or text node and a line reader none on one line: each would
/// buffer a 60 MB value whole before anything could look at it. Counting here stops such a value after
/// <c>maxRunBytes</c>, so a reader's memory stays bounded whatever the document's size.</remarks>
sealed class TokenLimitStream(Stream inner, byte delimiter1, byte delimiter2, int maxRunBytes) : Stream
{
    long _run;
    long _offset;

    public override int Read(byte[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

    public override int Read(Span<byte> buffer)
    {
        var n = inner.Read(buffer);
        var data = buffer[..n];
        while (data.Length > 0)
        {
            var at = data.IndexOfAny(delimiter1, delimiter2);
            if (at < 0)
            {
                _run += data.Length;
                break;
            }
            _run += at;
            Check(at);
            _run = 0;
            data = data[(at + 1)..];
        }
        Check(n);
        _offset += n;
        return n;
    }

    void Check(int within)
    {
        if (_run > maxRunBytes)
        {
            throw new CatalogFormatException(FormattableString.Invariant(
                $"A single tag, value or line is longer than {maxRunBytes} bytes (near byte {_offset + within})"));
        }
    }

    public override bool CanRead => true;
    public override bool CanSeek => false;
    public override bool CanWrite => false;
    public override long Length => throw new NotSupportedException();
    public override long Position { get => _offset; set => throw new NotSupportedException(); }
    public override void Flush() { }
    public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();
    public override void SetLength(long value) => throw new NotSupportedException();
    public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
}
